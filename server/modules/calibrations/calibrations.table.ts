import { sql } from 'drizzle-orm';
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
import type { CalibrationResult } from '#shared/schemas/calibration-result';
import { measurements } from '../measurements/measurements.table';
import { recipes } from '../recipes/recipes.table';
import { stations } from '../stations/stations.table';
import { units } from '../units/units.table';
import { users } from '../users/users.table';
import { CALIBRATION_PURPOSES, CALIBRATION_VERDICTS } from '#shared/schemas/calibrations';

export const calibrationVerdictEnum = pgEnum('calibration_verdict', CALIBRATION_VERDICTS);

/**
 * Why a calibration was computed: for the station that posted the measurement (it judges the unit),
 * or as a later recomputation by an engineer (analysis only: it never changes the unit).
 */
export const calibrationPurposeEnum = pgEnum('calibration_purpose', CALIBRATION_PURPOSES);

/**
 * One computation of a measurement with one recipe version by one engine version. Never updated or
 * deleted; a recomputation is a new row. At most one row per (measurement, recipe version, engine
 * version): a retried job cannot add a second.
 */
export const calibrations = pgTable(
  'calibrations',
  {
    id: uuid().primaryKey().defaultRandom(),
    measurementPk: uuid()
      .notNull()
      .references(() => measurements.id),
    recipeId: uuid()
      .notNull()
      .references(() => recipes.id),
    unitId: uuid()
      .notNull()
      .references(() => units.id),
    stationId: uuid()
      .notNull()
      .references(() => stations.id),
    engineVersion: text().notNull(),
    verdict: calibrationVerdictEnum().notNull(),
    purpose: calibrationPurposeEnum().notNull().default('station'),
    /** Who asked for a recomputation, and why. */
    requestedBy: uuid().references(() => users.id),
    reason: text(),
    offsetDeg: doublePrecision(),
    offsetCounts: integer(),
    /** Attempt number of this unit (1-based) when it counted; null for unusable input. */
    attempt: integer(),
    result: jsonb()
      .$type<CalibrationResult | { error: { code: string; message: string; issues?: unknown } }>()
      .notNull(),
    computeMs: doublePrecision(),
    computedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex('calibrations_measurement_recipe_engine_key').on(
      t.measurementPk,
      t.recipeId,
      t.engineVersion,
    ),
    index('calibrations_unit_idx').on(t.unitId, t.computedAt),
    index('calibrations_station_idx').on(t.stationId, t.computedAt),
    // The containment search's station and time filters, answered from the index alone (the unit id
    // rides along): station results only, which is all the search reads.
    index('calibrations_station_search_idx')
      .on(t.stationId, t.computedAt, t.unitId)
      .where(sql`${t.purpose} = 'station'`),
    index('calibrations_time_search_idx')
      .on(t.computedAt, t.unitId)
      .where(sql`${t.purpose} = 'station'`),
  ],
);

/** What the station wrote into the unit and read back. Append-only. */
export const programmingConfirmations = pgTable(
  'programming_confirmations',
  {
    id: uuid().primaryKey().defaultRandom(),
    calibrationId: uuid()
      .notNull()
      .references(() => calibrations.id),
    unitId: uuid()
      .notNull()
      .references(() => units.id),
    stationId: uuid()
      .notNull()
      .references(() => stations.id),
    expectedCounts: integer().notNull(),
    writtenCounts: integer().notNull(),
    readBackCounts: integer().notNull(),
    checksum: text(),
    matches: boolean().notNull(),
    confirmedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('programming_calibration_idx').on(t.calibrationId)],
);

export type CalibrationRecord = typeof calibrations.$inferSelect;
