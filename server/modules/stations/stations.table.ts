import { sql } from 'drizzle-orm';
import { index, jsonb, pgTable, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import { users } from '../users/users.table';

/**
 * An end-of-line test station. `allowedModelIds` lists the models it may measure;
 * `attendedBy` is the operator signed in at its panel now (recorded on each measurement).
 */
export const stations = pgTable(
  'stations',
  {
    id: uuid().primaryKey().defaultRandom(),
    name: text().notNull(),
    line: text().notNull(),
    allowedModelIds: jsonb().$type<string[]>().notNull().default([]),
    attendedBy: uuid().references(() => users.id),
    attendedSince: timestamp({ withTimezone: true }),
    lastSeenAt: timestamp({ withTimezone: true }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('stations_name_key').on(sql`upper(${t.name})`)],
);

/**
 * API keys of a station. Only a SHA-256 of the key is stored (keys are 256-bit random, so a fast
 * hash is enough); `prefix` identifies a key on screen. Several keys may be active during rotation.
 */
export const stationKeys = pgTable(
  'station_keys',
  {
    id: uuid().primaryKey().defaultRandom(),
    stationId: uuid()
      .notNull()
      .references(() => stations.id),
    label: text().notNull(),
    prefix: text().notNull(),
    keyHash: text().notNull(),
    createdBy: uuid().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    lastUsedAt: timestamp({ withTimezone: true }),
    revokedAt: timestamp({ withTimezone: true }),
  },
  (t) => [
    uniqueIndex('station_keys_hash_key').on(t.keyHash),
    index('station_keys_station_idx').on(t.stationId),
  ],
);

export type StationRecord = typeof stations.$inferSelect;
export type StationKeyRecord = typeof stationKeys.$inferSelect;
