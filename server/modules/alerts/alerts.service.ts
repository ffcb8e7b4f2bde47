import { and, eq, ne, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { Logger } from '#server/lib/logger';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import type { Mailer } from '../mail/mail.service';
import { stationCalibrationsAfter, stationModelPairs } from '../read-models/calibration-figures.repository';
import { findStation } from '../stations/stations.service';
import { findUserById } from '../users/users.repository';
import { limitsInForce } from '../analysis/control-limits.service';
import {
  alertSubscriptions,
  chartAlerts,
  watchedCharts,
  type AlertPoint,
  type WatchedChartRecord,
} from './alerts.table';
import { alreadySeen, initialWatchState, watchStep, type WatchHit, type WatchState } from './alerts.watch';

/** Points kept on one alert (the first ones and the latest ones matter; the count says how many more). */
const MAX_ALERT_POINTS = 50;
/** Calibrations taken in per transaction (a long backlog is worked through in several). */
const BATCH = 500;

/** The charts watched for every station × model unless an engineer changes them. */
const DEFAULT_CHARTS = [
  { kind: 'imr' as const, ruleSet: 'western-electric', rules: [1, 2, 3, 4], lambda: null, limitWidth: null },
  { kind: 'ewma' as const, ruleSet: 'western-electric', rules: [1, 2], lambda: 0.2, limitWidth: 3 },
];

/** How people read each kind of watched chart. */
export const CHART_LABELS = {
  imr: 'Individuals chart of the offset',
  ewma: 'EWMA of the offset',
  'xbar-r': 'Subgroup means and ranges of the offset',
  qualification: 'Reference-unit qualification',
} as const;

export interface WatchDeps {
  db: Db;
  clock: () => Date;
  logger: Logger;
  mailer?: Mailer | null;
  publicUrl?: string;
}

export async function ensureDefaultCharts(db: DbOrTx, stationId: string, modelId: string, now: Date) {
  await db
    .insert(watchedCharts)
    .values(
      DEFAULT_CHARTS.map((c) => ({
        ...c,
        stationId,
        modelId,
        state: initialWatchState(),
        createdAt: now,
        updatedAt: now,
      })),
    )
    .onConflictDoNothing();
}

interface RaisedAlert {
  alertId: string;
  chart: WatchedChartRecord;
  hit: WatchHit;
}

/**
 * Takes every new calibration of a station × model into its watched charts, in computed order, from each
 * chart's saved state (never re-reading the history), and opens or extends alerts. Safe to run twice: the
 * chart row is locked and its cursor says what was taken in. Subscribers are mailed about new alerts.
 */
export async function watchStationModel(
  deps: WatchDeps,
  key: { stationId: string; modelId: string },
): Promise<{ taken: number; raised: number }> {
  let taken = 0;
  const raised: RaisedAlert[] = [];
  const pairCharts = (tx: DbOrTx) =>
    tx
      .select()
      .from(watchedCharts)
      .where(
        and(
          eq(watchedCharts.stationId, key.stationId),
          eq(watchedCharts.modelId, key.modelId),
          ne(watchedCharts.kind, 'qualification'),
        ),
      )
      .orderBy(watchedCharts.kind)
      .for('update');
  for (;;) {
    const batch = await deps.db.transaction(async (tx) => {
      let all = await pairCharts(tx);
      // The default charts are made the first time a pair is watched (and again if one went missing).
      if (DEFAULT_CHARTS.some((d) => !all.some((c) => c.kind === d.kind))) {
        await ensureDefaultCharts(tx, key.stationId, key.modelId, deps.clock());
        all = await pairCharts(tx);
      }
      const charts = all.filter((c) => c.watched);
      if (!charts.length) return 0;
      // Every chart of the pair moves together; the oldest cursor decides where to read from.
      const cursors = charts.map((c) => c.state.cursor);
      const oldest = cursors.some((c) => c === null)
        ? null
        : cursors.reduce((a, b) => (a!.at < b!.at || (a!.at === b!.at && a!.id < b!.id) ? a : b));
      const rows = await stationCalibrationsAfter(tx, {
        ...key,
        after: oldest ? { at: new Date(oldest.at), id: oldest.id } : null,
        limit: BATCH,
      });
      // Nothing new (a run whose calibrations an earlier run took in already): nothing to write.
      if (!rows.length) return 0;
      // Frozen offset limits of the station (else of the model) replace each chart's own limits while in force.
      const limits = await limitsInForce(tx, { ...key, figure: 'offsetDeg' });
      const frozen =
        limits && limits.center !== null && limits.sigma !== null
          ? { id: limits.id, center: limits.center, sigma: limits.sigma }
          : null;
      const changed: { id: string; state: WatchState }[] = [];
      for (const chart of charts) {
        let state = chart.state;
        for (const r of rows) {
          const point: AlertPoint = {
            serial: r.serial,
            unitId: r.unitId,
            calibrationId: r.calibrationId,
            value: r.offsetDeg,
            at: r.computedAt.toISOString(),
          };
          if (alreadySeen(state, r.calibrationId)) continue;
          if (
            state.cursor &&
            (point.at < state.cursor.at ||
              (point.at === state.cursor.at && point.calibrationId <= state.cursor.id))
          )
            continue;
          const step = watchStep(
            state,
            {
              // The query above leaves out the 'qualification' anchor rows.
              kind: chart.kind as 'imr' | 'ewma',
              ruleSet: chart.ruleSet as 'western-electric' | 'nelson',
              rules: chart.rules,
              lambda: chart.lambda ?? 0.2,
              limitWidth: chart.limitWidth ?? 3,
              subgroupSize: chart.subgroupSize ?? 5,
              frozen,
            },
            point,
          );
          state = step.state;
          for (const hit of step.hits) {
            const id = await recordHit(tx, chart.id, hit, r.computedAt);
            if (id) raised.push({ alertId: id, chart, hit });
          }
        }
        if (state !== chart.state) changed.push({ id: chart.id, state });
      }
      // Every chart whose state moved, in one statement.
      if (changed.length) {
        await tx.execute(sql`
          update ${watchedCharts} set state = v.state, updated_at = ${deps.clock()}
            from jsonb_to_recordset(${JSON.stringify(changed)}::jsonb) as v(id uuid, state jsonb)
           where ${watchedCharts.id} = v.id`);
      }
      return rows.length;
    });
    taken += batch;
    if (batch < BATCH) break;
  }
  if (raised.length && deps.mailer) await mailSubscribers(deps, raised);
  return { taken, raised: raised.length };
}

/**
 * Brings every station × model's watched charts up to date (each from its saved state). The demo seed
 * runs it once after writing the fortnight in-process, where no chart-watch job is queued.
 */
export async function watchEveryStationModel(deps: WatchDeps): Promise<{ taken: number; raised: number }> {
  let taken = 0;
  let raised = 0;
  for (const key of await stationModelPairs(deps.db)) {
    const out = await watchStationModel(deps, key);
    taken += out.taken;
    raised += out.raised;
  }
  return { taken, raised };
}

/** Extends the open alert of this chart and rule, or opens one; returns the id of a newly opened alert. */
async function recordHit(tx: DbOrTx, chartId: string, hit: WatchHit, at: Date): Promise<string | null> {
  const [open] = await tx
    .select({ id: chartAlerts.id, points: chartAlerts.points })
    .from(chartAlerts)
    .where(
      and(eq(chartAlerts.chartId, chartId), eq(chartAlerts.rule, hit.rule), eq(chartAlerts.status, 'open')),
    );
  if (open) {
    const known = new Set(open.points.map((p) => p.calibrationId));
    const merged = [...open.points, ...hit.points.filter((p) => !known.has(p.calibrationId))];
    const points =
      merged.length > MAX_ALERT_POINTS
        ? [...merged.slice(0, 10), ...merged.slice(-(MAX_ALERT_POINTS - 10))]
        : merged;
    await tx
      .update(chartAlerts)
      .set({ points, hits: sql`${chartAlerts.hits} + 1`, lastHitAt: at })
      .where(eq(chartAlerts.id, open.id));
    return null;
  }
  const [created] = await tx
    .insert(chartAlerts)
    .values({
      chartId,
      rule: hit.rule,
      ruleText: hit.ruleText,
      points: hit.points,
      raisedAt: at,
      lastHitAt: at,
    })
    .returning({ id: chartAlerts.id });
  return created.id;
}

async function mailSubscribers(deps: WatchDeps, raised: RaisedAlert[]) {
  const subscribed = await deps.db.select().from(alertSubscriptions);
  const people = await Promise.all(subscribed.map((s) => findUserById(deps.db, s.userId)));
  const to = people
    .filter((p) => p && p.email && !p.disabled)
    .map((p) => ({ email: p!.email!, name: p!.displayName }));
  if (!to.length) return;
  const chart = raised[0].chart;
  const station = await findStation(deps.db, chart.stationId);
  const found = await findModelWithActiveRecipe(deps.db, chart.modelId);
  const lines = raised.map(
    (r) =>
      `- ${CHART_LABELS[r.chart.kind]}: ${r.hit.ruleText} (units ${r.hit.points.map((p) => p.serial).join(', ')})`,
  );
  for (const person of to) {
    try {
      await deps.mailer!.send({
        to: person.email!,
        subject: `Phasewright: ${raised.length} new alert${raised.length === 1 ? '' : 's'} on ${station?.name ?? 'a station'} (${found?.model.code ?? 'model'})`,
        text: [
          `Hello ${person.name},`,
          '',
          `The offset charts of ${station?.name ?? 'a station'} for ${found?.model.code ?? 'a model'} broke a rule:`,
          ...lines,
          '',
          `Open alerts and acknowledgement: ${deps.publicUrl ?? ''}/`,
          'You get this because you subscribed to chart alerts; unsubscribe on the overview page.',
        ].join('\n'),
      });
    } catch (e) {
      // The alert itself is recorded and shown; a mail relay that is down must not fail the watch.
      deps.logger.warn({ err: e, to: person.email }, 'alert mail could not be sent');
    }
  }
}

/**
 * Opens (or extends) the alert of a station × model's reference-unit readings: a failed qualification.
 * The qualification module calls it; the chart row of kind 'qualification' only anchors the alert (the
 * watch loop leaves it alone). The point is the reading: the reference unit and its deviation.
 */
export async function raiseQualificationAlert(
  db: DbOrTx,
  input: { stationId: string; modelId: string; ruleText: string; point: AlertPoint; at: Date },
): Promise<string | null> {
  await db
    .insert(watchedCharts)
    .values({
      stationId: input.stationId,
      modelId: input.modelId,
      kind: 'qualification',
      ruleSet: 'qualification',
      rules: [1],
      lambda: null,
      limitWidth: null,
      state: initialWatchState(),
      createdAt: input.at,
      updatedAt: input.at,
    })
    .onConflictDoNothing();
  const [chart] = await db
    .select({ id: watchedCharts.id })
    .from(watchedCharts)
    .where(
      and(
        eq(watchedCharts.stationId, input.stationId),
        eq(watchedCharts.modelId, input.modelId),
        eq(watchedCharts.kind, 'qualification'),
      ),
    );
  return recordHit(db, chart.id, { rule: 1, ruleText: input.ruleText, points: [input.point] }, input.at);
}
