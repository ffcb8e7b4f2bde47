import { sql } from 'drizzle-orm';
import { customType, doublePrecision, index, integer, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { calibrationPurposeEnum, calibrationVerdictEnum } from './calibrations.table';

/** PostgreSQL's 64-bit transaction id (xid8), read as text. */
const xid8 = customType<{ data: string; driverData: string }>({
  dataType: () => 'xid8',
});

/**
 * One narrow row per calibration for the line statistics: what their filters name (model, station, lots,
 * recipe version, operator, purpose, verdict, attempt, time) and every figure they offer as a float column.
 * PostgreSQL writes it: a statement trigger on calibrations inserts the rows of every insert (station
 * computes, recomputations, seeds, benches), and a trigger on units carries a changed serial, model or lot
 * over (migration 0020). Nothing else writes it, so it never disagrees with the calibrations it copies; no
 * foreign keys (every key was checked when the calibration was inserted).
 */
export const calibrationStats = pgTable(
  'calibration_stats',
  {
    calibrationId: uuid().primaryKey(),
    computedAt: timestamp({ withTimezone: true }).notNull(),
    offsetDeg: doublePrecision(),
    lagDeg: doublePrecision(),
    speedRpm: doublePrecision(),
    fitResidualDeg: doublePrecision(),
    keVPerKrpm: doublePrecision(),
    placementADeg: doublePrecision(),
    placementBDeg: doublePrecision(),
    placementCDeg: doublePrecision(),
    modelId: uuid().notNull(),
    stationId: uuid().notNull(),
    unitId: uuid().notNull(),
    operatorId: uuid(),
    purpose: calibrationPurposeEnum().notNull(),
    verdict: calibrationVerdictEnum().notNull(),
    attempt: integer(),
    recipeVersion: integer().notNull(),
    serial: text().notNull(),
    hallBoardLot: text(),
    magnetRingLot: text(),
    statorLot: text(),
    // The transaction that wrote this version of the row (its insert, or a lot corrected later): readers
    // that keep the rows in memory fetch only what changed since their snapshot (migration 0023).
    changedXid: xid8()
      .notNull()
      .default(sql`pg_current_xact_id()`),
  },
  (t) => [
    // A model's calibrations in production order: whole-model views (moving ranges need that order) and
    // the newest points of a model's chart.
    index('calibration_stats_model_time_idx').on(t.modelId, t.purpose, t.computedAt, t.calibrationId),
    // One station's newest points (the control chart), backwards along the index.
    index('calibration_stats_station_time_idx').on(
      t.stationId,
      t.modelId,
      t.purpose,
      t.computedAt,
      t.calibrationId,
    ),
    // The unit trigger finds a unit's rows.
    index('calibration_stats_unit_idx').on(t.unitId),
    // What changed since a snapshot: the rows written by transactions from its xmin on.
    index('calibration_stats_changed_idx').on(t.changedXid),
  ],
);
