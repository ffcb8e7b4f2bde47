import {
  index,
  jsonb,
  pgEnum,
  pgTable,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core';
import { stations } from '../stations/stations.table';
import { units } from '../units/units.table';
import { users } from '../users/users.table';
import { MEASUREMENT_SOURCES } from '#shared/schemas/measurements';

export const measurementSourceEnum = pgEnum('measurement_source', MEASUREMENT_SOURCES);

/**
 * Raw measurements exactly as the station posted them (`payloadRaw` is the body's text, `payloadSha256`
 * its hash). Never updated or deleted: a trigger refuses it.
 */
export const measurements = pgTable(
  'measurements',
  {
    id: uuid().primaryKey().defaultRandom(),
    /** The station's idempotency key. */
    measurementId: text().notNull(),
    stationId: uuid()
      .notNull()
      .references(() => stations.id),
    unitId: uuid()
      .notNull()
      .references(() => units.id),
    serial: text().notNull(),
    source: measurementSourceEnum().notNull(),
    payload: jsonb().notNull(),
    payloadRaw: text().notNull(),
    payloadSha256: text().notNull(),
    operatorId: uuid().references(() => users.id),
    receivedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex('measurements_measurement_id_key').on(t.measurementId),
    index('measurements_unit_idx').on(t.unitId),
    index('measurements_station_received_idx').on(t.stationId, t.receivedAt),
  ],
);

export type MeasurementRecord = typeof measurements.$inferSelect;
