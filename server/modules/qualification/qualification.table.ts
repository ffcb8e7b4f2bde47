import {
  boolean,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core';
import type { CertifiedFrom } from '#shared/schemas/qualification';
import { models, recipes } from '../recipes/recipes.table';
import { stations } from '../stations/stations.table';
import { units } from '../units/units.table';
import { users } from '../users/users.table';
import {
  GAUGE_APPRAISER_KINDS,
  GAUGE_STUDY_STATUSES,
  QUALIFICATION_VERDICTS,
} from '#shared/schemas/qualification';

/**
 * A unit kept as a reference for its model: its certified offset and the tolerance a station's reading
 * of it must meet. `certifiedOffsetDeg` is null while the unit is being certified (its readings are
 * recorded, not judged). The unit's own record is never changed by measuring it.
 */
export const referenceUnits = pgTable(
  'reference_units',
  {
    id: uuid().primaryKey().defaultRandom(),
    unitId: uuid()
      .notNull()
      .references(() => units.id),
    /** The unit's serial (normalised, never changes): the production gate recognises it without a join. */
    serial: text().notNull(),
    modelId: uuid()
      .notNull()
      .references(() => models.id),
    certifiedOffsetDeg: doublePrecision(),
    toleranceDeg: doublePrecision().notNull(),
    /** How the certified value was found: the readings on a station (and those left out, with reasons), sd, expanded uncertainty (k = 2). */
    certifiedFrom: jsonb().$type<CertifiedFrom | null>(),
    createdBy: uuid().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    retiredAt: timestamp({ withTimezone: true }),
  },
  (t) => [
    uniqueIndex('reference_units_unit_key').on(t.unitId),
    uniqueIndex('reference_units_serial_key').on(t.serial),
  ],
);

/** When a station must be qualified, and with which reference units. A station without a row is never locked. */
export const qualificationPolicies = pgTable('qualification_policies', {
  stationId: uuid()
    .primaryKey()
    .references(() => stations.id),
  atShiftStart: boolean().notNull().default(true),
  everyHours: doublePrecision(),
  everyUnits: integer(),
  referenceUnitIds: jsonb().$type<string[]>().notNull().default([]),
  updatedBy: uuid().references(() => users.id),
  updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});

/** The plant's shift starts, in minutes after local midnight (time zone: PLANT_TIME_ZONE). */
export const plantShifts = pgTable('plant_shifts', {
  id: uuid().primaryKey().defaultRandom(),
  name: text().notNull(),
  startMinute: integer().notNull(),
  createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});

export const qualificationVerdictEnum = pgEnum('qualification_verdict', QUALIFICATION_VERDICTS);

/**
 * A reading of a reference unit at a station (append-only). It is computed with the model's active
 * recipe like a production measurement, but stored here only: no unit, measurement, calibration or
 * traveler row is made. `recorded` is a reading taken while the unit is being certified.
 */
export const qualificationRuns = pgTable(
  'qualification_runs',
  {
    id: uuid().primaryKey().defaultRandom(),
    measurementId: text().notNull(),
    stationId: uuid()
      .notNull()
      .references(() => stations.id),
    referenceUnitId: uuid()
      .notNull()
      .references(() => referenceUnits.id),
    serial: text().notNull(),
    recipeId: uuid()
      .notNull()
      .references(() => recipes.id),
    engineVersion: text().notNull(),
    payload: jsonb().notNull(),
    verdict: qualificationVerdictEnum().notNull(),
    offsetDeg: doublePrecision().notNull(),
    certifiedOffsetDeg: doublePrecision(),
    toleranceDeg: doublePrecision().notNull(),
    deviationDeg: doublePrecision(),
    result: jsonb().notNull(),
    operatorId: uuid().references(() => users.id),
    measuredAt: timestamp({ withTimezone: true }).notNull(),
  },
  (t) => [
    uniqueIndex('qualification_runs_measurement_key').on(t.measurementId),
    index('qualification_runs_station_idx').on(t.stationId, t.measuredAt),
  ],
);

/** An engineer's lifting of a station's lock until `expiresAt`, with the reason (append-only). */
export const qualificationOverrides = pgTable(
  'qualification_overrides',
  {
    id: uuid().primaryKey().defaultRandom(),
    stationId: uuid()
      .notNull()
      .references(() => stations.id),
    reason: text().notNull(),
    grantedBy: uuid()
      .notNull()
      .references(() => users.id),
    grantedAt: timestamp({ withTimezone: true }).notNull(),
    expiresAt: timestamp({ withTimezone: true }).notNull(),
  },
  (t) => [index('qualification_overrides_station_idx').on(t.stationId, t.expiresAt)],
);

export const gaugeAppraiserKindEnum = pgEnum('gauge_appraiser_kind', GAUGE_APPRAISER_KINDS);
export const gaugeStudyStatusEnum = pgEnum('gauge_study_status', GAUGE_STUDY_STATUSES);

export interface GaugeRunStep {
  part: number;
  appraiser: number;
  trial: number;
}

/**
 * A crossed gauge study: every part measured by every appraiser `trials` times, in a randomised order.
 * Appraisers are stations (each measures at its own rig) or operators (all at `stationIds[0]`).
 */
export const gaugeStudies = pgTable('gauge_studies', {
  id: uuid().primaryKey().defaultRandom(),
  name: text().notNull(),
  modelId: uuid()
    .notNull()
    .references(() => models.id),
  appraiserKind: gaugeAppraiserKindEnum().notNull(),
  /** Station ids or user ids, in appraiser order. */
  appraiserIds: jsonb().$type<string[]>().notNull(),
  /** Where the operators of an operator study measure (null when the appraisers are stations). */
  stationId: uuid().references(() => stations.id),
  /** Unit ids of the parts, in part order. */
  partUnitIds: jsonb().$type<string[]>().notNull(),
  trials: integer().notNull(),
  toleranceDeg: doublePrecision().notNull(),
  runOrder: jsonb().$type<GaugeRunStep[]>().notNull(),
  status: gaugeStudyStatusEnum().notNull().default('open'),
  createdBy: uuid().references(() => users.id),
  createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  finishedAt: timestamp({ withTimezone: true }),
});

/**
 * One trial of a gauge study (append-only). A spoiled trial is measured again with a reason; the latest
 * reading of a (part, appraiser, trial) counts. Units are never changed by a study.
 */
export const gaugeStudyMeasurements = pgTable(
  'gauge_study_measurements',
  {
    id: uuid().primaryKey().defaultRandom(),
    studyId: uuid()
      .notNull()
      .references(() => gaugeStudies.id),
    measurementId: text().notNull(),
    stationId: uuid()
      .notNull()
      .references(() => stations.id),
    operatorId: uuid().references(() => users.id),
    part: integer().notNull(),
    appraiser: integer().notNull(),
    trial: integer().notNull(),
    serial: text().notNull(),
    payload: jsonb().notNull(),
    offsetDeg: doublePrecision().notNull(),
    result: jsonb().notNull(),
    repeatReason: text(),
    measuredAt: timestamp({ withTimezone: true }).notNull(),
  },
  (t) => [
    uniqueIndex('gauge_study_measurements_measurement_key').on(t.measurementId),
    index('gauge_study_measurements_study_idx').on(t.studyId, t.part, t.appraiser, t.trial),
  ],
);

export type ReferenceUnitRecord = typeof referenceUnits.$inferSelect;
export type QualificationPolicyRecord = typeof qualificationPolicies.$inferSelect;
export type QualificationRunRecord = typeof qualificationRuns.$inferSelect;
export type GaugeStudyRecord = typeof gaugeStudies.$inferSelect;
export type GaugeStudyMeasurementRecord = typeof gaugeStudyMeasurements.$inferSelect;
