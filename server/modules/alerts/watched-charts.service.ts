import { and, asc, eq, ne } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import { insertAudit } from '../audit/audit.repository';
import { limitsInForce } from '../analysis/control-limits.service';
import { newestStationCalibration } from '../read-models/calibration-figures.repository';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { findStation } from '../stations/stations.service';
import { allRules } from '#shared/statistics';
import type { WatchedChartSettings, WatchedChartView } from '#shared/schemas/alerts';
import { alertErrors } from './alerts.errors';
import { watchedCharts, type WatchedChartRecord } from './alerts.table';
import { CHART_LABELS, ensureDefaultCharts } from './alerts.service';
import { initialWatchState, type WatchState } from './alerts.watch';

/** The watched charts (of a model, a station, or all), with the limits each judges against. */
export async function listWatchedCharts(
  db: DbOrTx,
  q: { modelId?: string; stationId?: string },
): Promise<WatchedChartView[]> {
  // Qualification alerts ride on the alerts list with a chart row of their own, but nobody configures them here.
  const where = [ne(watchedCharts.kind, 'qualification')];
  if (q.modelId) where.push(eq(watchedCharts.modelId, q.modelId));
  if (q.stationId) where.push(eq(watchedCharts.stationId, q.stationId));
  const rows = await db
    .select()
    .from(watchedCharts)
    .where(and(...where))
    .orderBy(asc(watchedCharts.stationId), asc(watchedCharts.modelId), asc(watchedCharts.kind));
  const names = new Map<string, string>();
  const frozen = new Map<string, boolean>();
  for (const r of rows) {
    if (!names.has(r.stationId))
      names.set(r.stationId, (await findStation(db, r.stationId))?.name ?? 'Unknown station');
    if (!names.has(r.modelId))
      names.set(r.modelId, (await findModelWithActiveRecipe(db, r.modelId))?.model.code ?? 'Unknown model');
    const pair = `${r.stationId}|${r.modelId}`;
    if (!frozen.has(pair))
      frozen.set(
        pair,
        !!(await limitsInForce(db, { modelId: r.modelId, stationId: r.stationId, figure: 'offsetDeg' })),
      );
  }
  return rows
    .map((r) => view(r, names, frozen.get(`${r.stationId}|${r.modelId}`)!))
    .sort((a, b) => a.station.localeCompare(b.station) || a.model.localeCompare(b.model));
}

function view(r: WatchedChartRecord, names: Map<string, string>, frozen: boolean): WatchedChartView {
  if (r.kind === 'qualification')
    throw new Error('A qualification chart is not a configurable watched chart');
  return {
    id: r.id,
    stationId: r.stationId,
    station: names.get(r.stationId)!,
    modelId: r.modelId,
    model: names.get(r.modelId)!,
    kind: r.kind,
    label: CHART_LABELS[r.kind],
    watched: r.watched,
    ruleSet: r.ruleSet as WatchedChartView['ruleSet'],
    rules: r.rules,
    lambda: r.lambda,
    limitWidth: r.limitWidth,
    subgroupSize: r.subgroupSize,
    changedBy: r.changedByName,
    changedAt: r.changedAt?.toISOString() ?? null,
    limits: frozen ? 'frozen' : r.state.baseline ? 'own' : 'pending',
    judged: r.state.count,
  };
}

/**
 * Sets one chart of a station × model (adding a kind the pair lacks), audited. The chart keeps the limits it
 * fixed from its first points and starts judging with the calibrations after this change: it never re-reads
 * the history.
 */
export async function setWatchedChart(
  db: Db,
  clock: () => Date,
  actor: SessionUser,
  input: WatchedChartSettings,
): Promise<WatchedChartView> {
  if (!(await findStation(db, input.stationId))) throw alertErrors.unknownStation();
  if (!(await findModelWithActiveRecipe(db, input.modelId))) throw alertErrors.unknownModel();
  const now = clock();
  const pair = { stationId: input.stationId, modelId: input.modelId };
  await ensureDefaultCharts(db, input.stationId, input.modelId, now);
  const saved = await db.transaction(async (tx) => {
    // Lock the pair's charts in the order the watch takes them, so a running watch and this change queue.
    const charts = await tx
      .select()
      .from(watchedCharts)
      .where(and(eq(watchedCharts.stationId, input.stationId), eq(watchedCharts.modelId, input.modelId)))
      .orderBy(watchedCharts.kind)
      .for('update');
    const existing = charts.find((c) => c.kind === input.kind);
    // The chart's own limits (σ within of individuals): its own, else a sibling's, so a new kind judges at once.
    const baseline =
      existing?.state.baseline ??
      charts.find((c) => c.kind !== 'qualification' && c.state.baseline)?.state.baseline ??
      null;
    const cursor = await newestStationCalibration(tx, pair);
    const state: WatchState = {
      ...initialWatchState(),
      baseline,
      ewma: baseline ? { count: 0, z: baseline.center } : null,
      cursor: cursor ? { at: cursor.at.toISOString(), id: cursor.id } : null,
    };
    const settings = {
      watched: input.watched,
      ruleSet: input.ruleSet,
      rules: input.kind === 'ewma' ? [1, 2] : (input.rules ?? allRules(input.ruleSet)),
      lambda: input.kind === 'ewma' ? input.lambda : null,
      limitWidth: input.kind === 'ewma' ? input.limitWidth : null,
      subgroupSize: input.kind === 'xbar-r' ? input.subgroupSize : null,
      changedBy: actor.id,
      changedByName: actor.displayName,
      changedAt: now,
      updatedAt: now,
    };
    const [row] = existing
      ? await tx
          .update(watchedCharts)
          .set({ ...settings, state })
          .where(eq(watchedCharts.id, existing.id))
          .returning()
      : await tx
          .insert(watchedCharts)
          .values({ ...pair, kind: input.kind, ...settings, state, createdAt: now })
          .returning();
    const shown = (c: typeof existing) =>
      c && {
        watched: c.watched,
        ruleSet: c.ruleSet,
        rules: c.rules,
        lambda: c.lambda,
        limitWidth: c.limitWidth,
        subgroupSize: c.subgroupSize,
      };
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'alerts.watched_chart_set',
      subjectType: 'watched_chart',
      subjectId: row.id,
      before: shown(existing) ?? null,
      after: { ...pair, kind: input.kind, ...shown(row) },
    });
    return row;
  });
  return (await listWatchedCharts(db, pair)).find((c) => c.id === saved.id)!;
}
