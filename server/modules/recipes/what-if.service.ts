// Over ~350 lines on purpose: one run's life (start, cancel, the cursor-driven replay, its summary and
// lot groups) reads as one story; the queries are in recipes.repository.ts and measurements.repository.ts.
import type pg from 'pg';
import { withTransaction } from '#server/db/transaction';
import type { Db } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import type { JobQueue } from '#jobs/queue-client';
import { ENGINE_VERSION } from '#shared/calibration';
import type { CheckCode } from '#shared/schemas/calibration-result';
import {
  COMPONENT_LOT_LABELS,
  type ComponentLotKind,
  type OffsetHistogram,
  type WhatIfChangedUnit,
  type WhatIfFilters,
  type WhatIfLotGroup,
  type WhatIfProgress,
  type WhatIfRunView,
  type WhatIfSummary,
} from '#shared/schemas/recipes';
import { EVENTS_CHANNEL } from '../events/event-hub';
import { runEngine } from '../measurements/measurements.service';
import { openReplayStream, replayMeasurement, type ReplayRow } from '../measurements/measurements.repository';
import type { Measurement } from '#shared/schemas/measurement';
import { listUsers } from '../users/users.repository';
import { componentLotsByIds, type ComponentLots } from '../units/units.service';
import { recipeErrors } from './recipes.errors';
import * as repo from './recipes.repository';
import type { RecipeRecord, WhatIfRunRecord } from './recipes.table';

export interface WhatIfContext {
  db: Db;
  pool: pg.Pool;
  queue: JobQueue;
  clock: () => Date;
}

/** Measurements read and replayed per batch: bounded memory whatever the selection's size. */
export const WHAT_IF_BATCH = 250;
const MAX_LISTED = 500;
/** Lots listed per kind of lot (hall board, magnet ring, stator); the counts behind them are complete. */
const MAX_LOTS_LISTED = 50;
const LOT_KINDS = Object.keys(COMPONENT_LOT_LABELS) as ComponentLotKind[];
const NO_LOTS: ComponentLots = { hallBoard: null, magnetRing: null, stator: null };

/** Replayed and changed units per component lot, for each kind of lot. */
class LotTally {
  private readonly byKind = new Map<ComponentLotKind, Map<string | null, WhatIfLotGroup>>(
    LOT_KINDS.map((k) => [k, new Map()]),
  );

  add(lots: ComponentLots, change: 'none' | 'passToFail' | 'failToPass' | 'other') {
    for (const kind of LOT_KINDS) {
      const groups = this.byKind.get(kind)!;
      const lot = lots[kind];
      let g = groups.get(lot);
      if (!g) groups.set(lot, (g = { lot, replayed: 0, changed: 0, passToFail: 0, failToPass: 0 }));
      g.replayed++;
      if (change === 'none') continue;
      g.changed++;
      if (change === 'passToFail') g.passToFail++;
      if (change === 'failToPass') g.failToPass++;
    }
  }

  /** Lots with at least one change, most changes first, then by share of the lot that changes. */
  result(): Record<ComponentLotKind, WhatIfLotGroup[]> {
    const out = {} as Record<ComponentLotKind, WhatIfLotGroup[]>;
    for (const kind of LOT_KINDS) {
      out[kind] = [...this.byKind.get(kind)!.values()]
        .filter((g) => g.changed > 0)
        .sort(
          (a, b) =>
            b.changed - a.changed ||
            b.changed / b.replayed - a.changed / a.replayed ||
            String(a.lot).localeCompare(String(b.lot)),
        )
        .slice(0, MAX_LOTS_LISTED);
    }
    return out;
  }
}

const CHECK_LABELS: Record<CheckCode, string> = {
  'offset.within_limits': 'Offset within its window',
  'edges.residual_spread': 'Edge residuals within limit',
  'bemf.phase_sequence': 'Phase sequence',
  'hall.all_switching': 'Every hall sensor switching',
  'hall.valid_states': 'Only valid hall states',
  'direction.as_declared': 'Turning direction as declared',
  'speed.within_window': 'Speed within its window',
  'turns.enough': 'Enough electrical turns',
  'fit.residual': 'Crossing fit residual',
  'speed.variation': 'Speed variation',
  'capture.ke_within_limits': 'Back-EMF constant within limits',
};

async function toView(db: Db, r: WhatIfRunRecord): Promise<WhatIfRunView> {
  const [recipe, baseline, people] = await Promise.all([
    repo.findRecipeRow(db, r.recipeId),
    repo.findRecipeRow(db, r.baselineRecipeId),
    listUsers(db),
  ]);
  const who = people.find((u) => u.id === r.requestedBy);
  return {
    id: r.id,
    recipe: { id: r.recipeId, version: recipe!.version },
    baseline: { id: r.baselineRecipeId, version: baseline!.version },
    modelId: r.modelId,
    status: r.status,
    filters: r.filters,
    total: r.total,
    processed: r.processed,
    summary: r.summary,
    error: r.error,
    requestedBy: who ? { id: who.id, displayName: who.displayName } : null,
    createdAt: r.createdAt.toISOString(),
    startedAt: r.startedAt?.toISOString() ?? null,
    finishedAt: r.finishedAt?.toISOString() ?? null,
  };
}

export async function getWhatIf(ctx: Pick<WhatIfContext, 'db'>, runId: string) {
  const r = await repo.findWhatIfRun(ctx.db, runId);
  if (!r) throw recipeErrors.runNotFound();
  return toView(ctx.db, r);
}

export async function listWhatIfs(ctx: Pick<WhatIfContext, 'db'>, recipeId: string) {
  if (!(await repo.findRecipeRow(ctx.db, recipeId))) throw recipeErrors.notFound();
  const rows = await repo.listWhatIfRunsOfRecipe(ctx.db, recipeId);
  return Promise.all(rows.map((r) => toView(ctx.db, r)));
}

/** Asks for a what-if run of any version against the version in force; the worker runs it. */
export async function startWhatIf(
  ctx: WhatIfContext,
  actor: SessionUser,
  recipeId: string,
  filters: WhatIfFilters,
) {
  const recipe = await repo.findRecipeRow(ctx.db, recipeId);
  if (!recipe) throw recipeErrors.notFound();
  const model = await repo.findModelRow(ctx.db, recipe.modelId);
  if (!model?.activeRecipeId) throw recipeErrors.noRunnableVersion();
  const baselineRecipeId = model.activeRecipeId;
  // The run and its job commit together, on one connection, as the station's measurement and its job do.
  const row = await withTransaction(ctx.pool, async ({ client, tx }) => {
    const run = await repo.insertWhatIfRun(tx, {
      recipeId,
      baselineRecipeId,
      modelId: model.id,
      filters,
      requestedBy: actor.id,
      createdAt: ctx.clock(),
    });
    await ctx.queue.send(
      'whatIfRun',
      { runId: run.id },
      { db: { executeSql: (text, values) => client.query(text, values) } },
    );
    return run;
  });
  return toView(ctx.db, row);
}

/** Asks a queued or running what-if to stop; the worker stops at its next batch. */
export async function cancelWhatIf(ctx: WhatIfContext, runId: string) {
  const r = await repo.findWhatIfRun(ctx.db, runId);
  if (!r) throw recipeErrors.runNotFound();
  if (r.status !== 'queued' && r.status !== 'running') throw recipeErrors.runFinished(r.status);
  const row = await repo.updateWhatIfRun(ctx.db, runId, { cancelRequested: true });
  return toView(ctx.db, row!);
}

async function progress(ctx: Pick<WhatIfContext, 'pool' | 'clock'>, r: WhatIfRunRecord) {
  const event: WhatIfProgress = {
    type: 'whatif.progress',
    runId: r.id,
    status: r.status,
    processed: r.processed,
    total: r.total,
    at: ctx.clock().toISOString(),
  };
  await ctx.pool.query('select pg_notify($1, $2)', [EVENTS_CHANNEL, JSON.stringify(event)]);
}

type Outcome = { verdict: string; offsetDeg: number | null; failed: Set<string> };

function outcomeOf(result: ReturnType<typeof runEngine>['result']): Outcome {
  if (!result) return { verdict: 'unusable', offsetDeg: null, failed: new Set() };
  return {
    verdict: result.verdict,
    offsetDeg: result.offsetDeg,
    failed: new Set(result.checks.filter((c) => !c.passed).map((c) => c.code)),
  };
}

/** What one version says of one stored measurement: the same engine call as a recomputation. */
export function replayOne(row: ReplayRow, payload: Measurement, recipe: RecipeRecord): Outcome {
  return outcomeOf(runEngine({ ...row, payload }, recipe).result);
}

function histogram(values: number[], fromDeg: number, toDeg: number): OffsetHistogram {
  const counts = new Array<number>(Math.max(1, toDeg - fromDeg)).fill(0);
  for (const v of values) counts[Math.min(counts.length - 1, Math.max(0, Math.floor(v) - fromDeg))]++;
  return { fromDeg, binDeg: 1, counts };
}

/**
 * Replays the run's measurements with its version and with the version in force, in batches, and
 * stores the comparison. It reads measurements and calibrations and writes only the run's own row:
 * no unit, calibration, traveler or station result changes. A second run of the same job (a retry)
 * starts the replay again from the beginning.
 */
export async function runWhatIf(
  ctx: Pick<WhatIfContext, 'db' | 'pool' | 'clock'>,
  runId: string,
): Promise<WhatIfRunRecord | undefined> {
  const run = await repo.findWhatIfRun(ctx.db, runId);
  if (!run || run.status === 'done' || run.status === 'cancelled' || run.status === 'failed') return run;
  if (run.cancelRequested) {
    const cancelled = (await repo.updateWhatIfRun(ctx.db, runId, {
      status: 'cancelled',
      finishedAt: ctx.clock(),
    }))!;
    await progress(ctx, cancelled);
    return cancelled;
  }
  const [recipe, baseline] = await Promise.all([
    repo.findRecipeRow(ctx.db, run.recipeId),
    repo.findRecipeRow(ctx.db, run.baselineRecipeId),
  ]);
  const t0 = performance.now();
  const stream = await openReplayStream(
    ctx.pool,
    { modelId: run.modelId, ...run.filters },
    baseline!.id,
    ENGINE_VERSION,
    WHAT_IF_BATCH,
  );
  const total = stream.total;
  let processed = 0;
  let current = (await repo.updateWhatIfRun(ctx.db, runId, {
    status: 'running',
    startedAt: ctx.clock(),
    total,
    processed: 0,
  }))!;
  await progress(ctx, current);

  const draftOffsets: number[] = [];
  const forceOffsets: number[] = [];
  const causes = new Map<string, number>();
  const changed: WhatIfChangedUnit[] = [];
  const lotTally = new LotTally();
  let passToFail = 0;
  let failToPass = 0;
  let unusable = 0;
  let changedCount = 0;

  try {
    // The cursor fetches the next batch while this one is replayed: the database and the engine work
    // side by side. Each batch's component lots come from the units module, read alongside.
    for await (const rows of stream.batches) {
      const lotsRead = componentLotsByIds(
        ctx.db,
        rows.map((r) => r.unitId),
      );
      const cancelAsked = (await repo.findWhatIfRun(ctx.db, runId))?.cancelRequested;
      const lots = await lotsRead;
      if (cancelAsked) {
        current = (await repo.updateWhatIfRun(ctx.db, runId, {
          status: 'cancelled',
          finishedAt: ctx.clock(),
        }))!;
        await progress(ctx, current);
        return current;
      }
      for (const row of rows) {
        const unitLots = lots.get(row.unitId) ?? NO_LOTS;
        const payload = replayMeasurement(row);
        const after = replayOne(row, payload, recipe!);
        const before: Outcome = row.baseline
          ? {
              verdict: row.baseline.verdict,
              offsetDeg: row.baseline.offsetDeg,
              failed: new Set(row.baseline.failedChecks),
            }
          : recipe!.id === baseline!.id
            ? after
            : replayOne(row, payload, baseline!);
        if (after.offsetDeg !== null) draftOffsets.push(after.offsetDeg);
        if (before.offsetDeg !== null) forceOffsets.push(before.offsetDeg);
        if (after.verdict === 'unusable') unusable++;
        if (before.verdict === after.verdict) {
          lotTally.add(unitLots, 'none');
          continue;
        }
        const change =
          before.verdict === 'pass' && after.verdict === 'fail'
            ? 'passToFail'
            : before.verdict === 'fail' && after.verdict === 'pass'
              ? 'failToPass'
              : 'other';
        if (change === 'passToFail') passToFail++;
        if (change === 'failToPass') failToPass++;
        lotTally.add(unitLots, change);
        changedCount++;
        const differing = [...new Set([...before.failed, ...after.failed])].filter(
          (c) => before.failed.has(c) !== after.failed.has(c),
        );
        for (const c of differing) causes.set(c, (causes.get(c) ?? 0) + 1);
        if (changed.length < MAX_LISTED) {
          changed.push({
            unitId: row.unitId,
            serial: row.serial,
            measurementId: row.measurementId,
            receivedAt: row.receivedAt.toISOString(),
            before: { verdict: before.verdict, offsetDeg: before.offsetDeg },
            after: { verdict: after.verdict, offsetDeg: after.offsetDeg },
            checks: differing,
            lots: unitLots,
          });
        }
      }
      processed += rows.length;
      current = (await repo.updateWhatIfRun(ctx.db, runId, { processed }))!;
      await progress(ctx, current);
    }
  } finally {
    await stream.close();
  }

  const all = [...draftOffsets, ...forceOffsets];
  const lo = all.length ? Math.max(-180, Math.floor(Math.min(...all))) : -1;
  const hi = all.length ? Math.min(181, Math.floor(Math.max(...all)) + 1) : 1;
  const seconds = (performance.now() - t0) / 1000;
  const summary: WhatIfSummary = {
    measurements: processed,
    passToFail,
    failToPass,
    unchanged: processed - changedCount,
    unusable,
    causes: [...causes.entries()]
      .map(([code, count]) => ({ code, label: CHECK_LABELS[code as CheckCode] ?? code, count }))
      .sort((a, b) => b.count - a.count),
    histogram: { draft: histogram(draftOffsets, lo, hi), inForce: histogram(forceOffsets, lo, hi) },
    changed: changed.sort((a, b) => b.receivedAt.localeCompare(a.receivedAt)),
    lots: lotTally.result(),
    measurementsPerSecond: seconds > 0 ? Math.round(processed / seconds) : 0,
  };
  current = (await repo.updateWhatIfRun(ctx.db, runId, {
    status: 'done',
    processed,
    summary,
    finishedAt: ctx.clock(),
  }))!;
  await progress(ctx, current);
  return current;
}
