import {
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  text,
  timestamp,
  uniqueIndex,
  uuid,
  boolean,
} from 'drizzle-orm/pg-core';
import { models } from '../recipes/recipes.table';
import { stations } from '../stations/stations.table';
import { users } from '../users/users.table';

/**
 * Control limits frozen from a baseline window an engineer chose (append-only, versioned). One scope is a
 * model, a figure and either one station or the whole model (`scope` = the station's id, or `model`); each
 * save is the next version of its scope, and a version with `cleared` returns the charts to limits computed
 * from the data shown. The newest version of a scope is in force. Centre and σ within are of individual
 * values, so every chart kind (I-MR, X̄-R, X̄-S, EWMA) derives its limits from them.
 */
export const controlLimitSets = pgTable(
  'control_limit_sets',
  {
    id: uuid().primaryKey().defaultRandom(),
    modelId: uuid()
      .notNull()
      .references(() => models.id),
    stationId: uuid().references(() => stations.id),
    /** The station's id, or `model` for limits of the model across stations (unique per version). */
    scope: text().notNull(),
    figure: text().notNull(),
    version: integer().notNull(),
    cleared: boolean().notNull().default(false),
    /** Centre and σ within of individual values (null on a clearing version). */
    center: doublePrecision(),
    sigma: doublePrecision(),
    /** How σ within was estimated: `imr` (MR̄/d2), `xbar-r` (R̄/d2) or `xbar-s` (s̄/c4). */
    basis: text(),
    subgroupSize: integer(),
    baselineFrom: timestamp({ withTimezone: true }),
    baselineTo: timestamp({ withTimezone: true }),
    /** Values in the baseline window. */
    points: integer(),
    /** The rest of the filter the baseline was read with (lots, verdict, attempts…), for the record. */
    filter: jsonb().$type<Record<string, unknown>>(),
    reason: text().notNull(),
    setBy: uuid()
      .notNull()
      .references(() => users.id),
    setByName: text().notNull(),
    setAt: timestamp({ withTimezone: true }).notNull(),
  },
  (t) => [
    uniqueIndex('control_limit_sets_version_key').on(t.modelId, t.scope, t.figure, t.version),
    index('control_limit_sets_station_idx').on(t.stationId),
  ],
);

export type ControlLimitSetRecord = typeof controlLimitSets.$inferSelect;
