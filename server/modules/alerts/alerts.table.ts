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
import { models } from '../recipes/recipes.table';
import { stations } from '../stations/stations.table';
import { users } from '../users/users.table';
import type { WatchState } from './alerts.watch';
import { CHART_ALERT_STATUSES, WATCHED_CHART_KINDS } from '#shared/schemas/alerts';

export const watchedChartKindEnum = pgEnum('watched_chart_kind', WATCHED_CHART_KINDS);

/**
 * A chart watched after every calibration: one station × one model and one kind: individuals or subgroup
 * means and ranges (with run rules), or EWMA. Engineers choose the kinds, rules and weights; each pair starts
 * with the default (individuals with Western Electric 1–4, and an EWMA). `state` holds everything the next point needs (limits once established, the last value, the run-rule
 * window, the EWMA statistic), so a new calibration is judged without reading the history again.
 */
export const watchedCharts = pgTable(
  'watched_charts',
  {
    id: uuid().primaryKey().defaultRandom(),
    modelId: uuid()
      .notNull()
      .references(() => models.id),
    stationId: uuid()
      .notNull()
      .references(() => stations.id),
    kind: watchedChartKindEnum().notNull(),
    ruleSet: text().notNull().default('western-electric'),
    rules: jsonb().$type<number[]>().notNull(),
    lambda: doublePrecision(),
    limitWidth: doublePrecision(),
    /** Consecutive units per subgroup (X̄-R only). */
    subgroupSize: integer(),
    /** False when an engineer stopped watching this chart (the row stays, so the default is not made again). */
    watched: boolean().notNull().default(true),
    /** Who last chose this chart's settings (null: the product's default). */
    changedBy: uuid().references(() => users.id),
    changedByName: text(),
    changedAt: timestamp({ withTimezone: true }),
    state: jsonb().$type<WatchState>().notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('watched_charts_station_model_kind_key').on(t.stationId, t.modelId, t.kind)],
);

export const chartAlertStatusEnum = pgEnum('chart_alert_status', CHART_ALERT_STATUSES);

/** A rule broken on a watched chart. At most one open alert per chart and rule (a partial unique index). */
export const chartAlerts = pgTable(
  'chart_alerts',
  {
    id: uuid().primaryKey().defaultRandom(),
    chartId: uuid()
      .notNull()
      .references(() => watchedCharts.id),
    rule: integer().notNull(),
    ruleText: text().notNull(),
    status: chartAlertStatusEnum().notNull().default('open'),
    /** Units involved, oldest first (serial, calibration id, value, when); capped. */
    points: jsonb().$type<AlertPoint[]>().notNull(),
    /** How many times the rule fired while the alert was open. */
    hits: integer().notNull().default(1),
    raisedAt: timestamp({ withTimezone: true }).notNull(),
    lastHitAt: timestamp({ withTimezone: true }).notNull(),
    acknowledgedBy: uuid().references(() => users.id),
    acknowledgedAt: timestamp({ withTimezone: true }),
    comment: text(),
  },
  (t) => [
    uniqueIndex('chart_alerts_open_key')
      .on(t.chartId, t.rule)
      .where(sql`status = 'open'`),
    index('chart_alerts_status_idx').on(t.status, t.raisedAt),
  ],
);

export interface AlertPoint {
  serial: string;
  unitId: string;
  calibrationId: string;
  value: number;
  at: string;
}

/** Engineers who get an e-mail when an alert is raised. */
export const alertSubscriptions = pgTable('alert_subscriptions', {
  userId: uuid()
    .primaryKey()
    .references(() => users.id),
  createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});

export type WatchedChartRecord = typeof watchedCharts.$inferSelect;
export type ChartAlertRecord = typeof chartAlerts.$inferSelect;
