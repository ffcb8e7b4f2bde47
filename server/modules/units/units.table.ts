import { sql } from 'drizzle-orm';
import {
  boolean,
  doublePrecision,
  index,
  integer,
  pgEnum,
  pgTable,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core';
import { models } from '../recipes/recipes.table';
import { UNIT_STATUSES } from '#shared/schemas/units';

export const unitStatusEnum = pgEnum('unit_status', UNIT_STATUSES);

/**
 * A motor unit, by serial. `currentOffset*` is the latest passing calibration (what should be
 * programmed); `programmingMismatch` is set when the station read back a different value.
 */
export const units = pgTable(
  'units',
  {
    id: uuid().primaryKey().defaultRandom(),
    serial: text().notNull(),
    modelId: uuid()
      .notNull()
      .references(() => models.id),
    workOrder: text(),
    hallBoardLot: text(),
    magnetRingLot: text(),
    statorLot: text(),
    status: unitStatusEnum().notNull().default('new'),
    holdReason: text(),
    /** Calibration attempts counted against the recipe's maximum (pass or fail; unusable input excluded). */
    attempts: integer().notNull().default(0),
    currentCalibrationId: uuid(),
    currentOffsetDeg: doublePrecision(),
    currentOffsetCounts: integer(),
    programmingMismatch: boolean().notNull().default(false),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex('units_serial_key').on(sql`upper(${t.serial})`),
    index('units_model_idx').on(t.modelId),
    // With the id, a containment search by lot joins its other filters from the index alone.
    index('units_hall_lot_idx').on(t.hallBoardLot, t.id),
    index('units_magnet_lot_idx').on(t.magnetRingLot, t.id),
    index('units_stator_lot_idx').on(t.statorLot, t.id),
  ],
);

export type UnitRecord = typeof units.$inferSelect;
