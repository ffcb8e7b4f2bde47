import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import { insertAudit } from '../audit/audit.repository';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { findStation } from '../stations/stations.service';
import { newestFigures } from '../read-models/calibration-aggregates.repository';
import { consecutiveSubgroups, individualsChart, subgroupChart, type Baseline } from '#shared/statistics';
import type {
  AnalysisFigure,
  AnalysisFilter,
  ClearLimitsInput,
  FreezeLimitsInput,
  LimitHistory,
  LimitScopeQuery,
  LimitSetView,
} from '#shared/schemas/analysis';
import type { ControlLimitSetRecord } from './analysis.table';
import { analysisErrors, limitErrors } from './analysis.errors';
import {
  appendLimitVersion,
  limitVersions,
  newestLimitVersion,
  newestStationOrModelVersion,
} from './control-limits.repository';

/** Values read from a baseline window at most (newest first); a longer window is cut to its newest. */
const BASELINE_MAX_POINTS = 50_000;

/**
 * Centre and σ within of the values the filter selects inside [from, to), estimated the way the chart kind
 * does (MR̄/d2 for individuals, R̄/d2 or s̄/c4 for consecutive subgroups of `size`).
 */
export async function baselineFromWindow(
  db: DbOrTx,
  filter: AnalysisFilter,
  chart: 'imr' | 'xbar-r' | 'xbar-s',
  size: number,
  from: Date,
  to: Date,
): Promise<{ baseline: Baseline; points: number }> {
  const { rows } = await newestFigures(db, filter, {
    from,
    to,
    limit: BASELINE_MAX_POINTS,
    withTotal: false,
  });
  const values = rows.map((r) => r.value);
  const c =
    chart === 'imr' ? individualsChart(values) : subgroupChart(consecutiveSubgroups(values, size), chart);
  if (!c || !(c.baseline.sigma > 0)) throw analysisErrors.emptyBaseline();
  return { baseline: c.baseline, points: values.length };
}

export function limitSetView(r: ControlLimitSetRecord): LimitSetView {
  return {
    id: r.id,
    version: r.version,
    scope: r.stationId ? 'station' : 'model',
    stationId: r.stationId,
    figure: r.figure as AnalysisFigure,
    cleared: r.cleared,
    center: r.center,
    sigma: r.sigma,
    basis: r.basis as LimitSetView['basis'],
    subgroupSize: r.subgroupSize,
    baselineFrom: r.baselineFrom?.toISOString() ?? null,
    baselineTo: r.baselineTo?.toISOString() ?? null,
    points: r.points,
    reason: r.reason,
    setBy: r.setByName,
    setAt: r.setAt.toISOString(),
  };
}

/**
 * The frozen limits charts of a station (or of the model, station null) use now: the station's own newest
 * version, else the model's; a clearing version means "computed from the data shown" (null).
 */
export async function limitsInForce(
  db: DbOrTx,
  s: { modelId: string; stationId: string | null; figure: string },
): Promise<ControlLimitSetRecord | null> {
  const newest = await newestStationOrModelVersion(db, s);
  return newest && !newest.cleared ? newest : null;
}

/** Frozen limits as a chart's baseline, or null. */
export function frozenBaseline(r: ControlLimitSetRecord | null): Baseline | null {
  return r && r.center !== null && r.sigma !== null ? { center: r.center, sigma: r.sigma } : null;
}

async function assertScope(db: DbOrTx, modelId: string, stationId: string | null) {
  if (!(await findModelWithActiveRecipe(db, modelId))) throw analysisErrors.unknownModel();
  if (stationId && !(await findStation(db, stationId))) throw limitErrors.unknownStation();
}

export async function limitHistory(db: DbOrTx, q: LimitScopeQuery): Promise<LimitHistory> {
  await assertScope(db, q.model, q.station ?? null);
  const scope = { modelId: q.model, stationId: q.station ?? null, figure: q.figure };
  const [inForce, versions] = await Promise.all([limitsInForce(db, scope), limitVersions(db, scope)]);
  return { inForce: inForce ? limitSetView(inForce) : null, versions: versions.map(limitSetView) };
}

/** Computes limits from the baseline window and saves them as the scope's next version (audited). */
export async function freezeLimits(
  db: Db,
  clock: () => Date,
  actor: SessionUser,
  input: FreezeLimitsInput,
): Promise<LimitSetView> {
  if (input.stations && input.stations.length > 1) throw limitErrors.oneStation();
  const stationId = input.stations?.[0] ?? null;
  await assertScope(db, input.model, stationId);
  const from = new Date(input.baselineFrom);
  const to = new Date(input.baselineTo);
  const { baseline, points } = await baselineFromWindow(db, input, input.chart, input.subgroupSize, from, to);
  // The rest of the filter, kept with the version so the record says what the baseline was read from.
  const filter = {
    hallBoardLots: input.hallBoardLots ?? null,
    magnetRingLots: input.magnetRingLots ?? null,
    statorLots: input.statorLots ?? null,
    recipeVersions: input.recipeVersions ?? null,
    operators: input.operators ?? null,
    verdict: input.verdict,
    attempts: input.attempts,
    purpose: input.purpose,
  };
  return db.transaction(async (tx) => {
    const created = await appendLimitVersion(tx, {
      modelId: input.model,
      stationId,
      figure: input.figure,
      cleared: false,
      center: baseline.center,
      sigma: baseline.sigma,
      basis: input.chart,
      subgroupSize: input.chart === 'imr' ? null : input.subgroupSize,
      baselineFrom: from,
      baselineTo: to,
      points,
      filter,
      reason: input.reason,
      setBy: actor.id,
      setByName: actor.displayName,
      setAt: clock(),
    });
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'analysis.limits_frozen',
      subjectType: 'control_limits',
      subjectId: created.id,
      reason: input.reason,
      after: {
        model: input.model,
        station: stationId,
        figure: input.figure,
        version: created.version,
        center: baseline.center,
        sigma: baseline.sigma,
        basis: input.chart,
        baselineFrom: input.baselineFrom,
        baselineTo: input.baselineTo,
        points,
      },
    });
    return limitSetView(created);
  });
}

/** Saves a clearing version: the scope's charts compute their limits from the data shown again (audited). */
export async function clearLimits(
  db: Db,
  clock: () => Date,
  actor: SessionUser,
  input: ClearLimitsInput,
): Promise<LimitSetView> {
  const stationId = input.station ?? null;
  await assertScope(db, input.model, stationId);
  return db.transaction(async (tx) => {
    const newest = await newestLimitVersion(tx, { modelId: input.model, stationId, figure: input.figure });
    if (!newest || newest.cleared) throw limitErrors.nothingToClear();
    const created = await appendLimitVersion(tx, {
      modelId: input.model,
      stationId,
      figure: input.figure,
      cleared: true,
      reason: input.reason,
      setBy: actor.id,
      setByName: actor.displayName,
      setAt: clock(),
    });
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'analysis.limits_cleared',
      subjectType: 'control_limits',
      subjectId: created.id,
      reason: input.reason,
      before: { version: newest.version, center: newest.center, sigma: newest.sigma },
      after: { version: created.version, cleared: true },
    });
    return limitSetView(created);
  });
}
