import { ENGINE_VERSION } from '#shared/calibration';
import { JOBS_WAKE_CHANNEL, queues, travelerRenderPriority } from '#jobs/queues';
import { withTransaction } from '#server/db/transaction';
import { EVENTS_CHANNEL } from '#server/modules/events/event-hub';
import { releasedRecipe } from '#server/modules/recipes/recipes.repository';
import { nextUnitState, placeAutomaticHold } from '#server/modules/quality/quality.service';
import { calibrationOfKey } from '#server/modules/calibrations/calibrations.repository';
import type { MeasurementsContext } from '../measurements.context';
import { recomputeCalibration, type RecomputeRequest } from '../recompute/recompute.service';
import {
  claimMeasurements,
  commitStationCalibration,
  lockUnitForCalibration,
  type MeasurementToCompute,
  type StationCalibrationCommit,
} from './compute.repository';
import { runEngine } from './run-engine';

type ComputeJob = { measurementPk: string; recipeId: string; recompute?: RecomputeRequest };
type Computed = { calibrationId: string; created: boolean };

/**
 * Computes one measurement with one recipe version and commits the calibration, the unit's new
 * status, the follow-on traveler job and the event in one transaction. Safe to run twice: a second
 * run finds the calibration (unique per measurement and recipe version) and does nothing.
 * Round trips are kept few on purpose (each costs more than the computation itself): the usual
 * calibration is two statements, the claim and the commit.
 */
export async function computeCalibration(ctx: MeasurementsContext, job: ComputeJob): Promise<Computed> {
  const [out] = await computeCalibrations(ctx, [job]);
  if (out instanceof Error) throw out;
  return out;
}

/**
 * Computes a batch of jobs (a worker's fetch): their measurements are claimed in one statement, then each is
 * computed and its commit sent without waiting for the one before (the engine's work for the next
 * measurement overlaps the commits in flight), so a batch costs one round trip, plus one a calibration. One
 * outcome a job, in order: its calibration, or the Error that failed it alone. A recomputation (an
 * engineer's) runs on its own, as before.
 */
export async function computeCalibrations(
  ctx: MeasurementsContext,
  jobs: readonly ComputeJob[],
): Promise<(Computed | Error)[]> {
  const station = jobs.filter((job) => !job.recompute);
  const claimed = station.length
    ? await claimMeasurements(ctx.pool, station, {
        engineVersion: ENGINE_VERSION,
        eventsChannel: EVENTS_CHANNEL,
        atText: ctx.clock().toISOString(),
      })
    : [];
  const claimOf = new Map(station.map((job, k) => [job, claimed[k]]));
  const settle = (run: () => Promise<Computed>) =>
    run().catch((e: unknown) => (e instanceof Error ? e : new Error(String(e))));
  return Promise.all(
    jobs.map((job) => {
      if (job.recompute) return settle(() => recomputeCalibration(ctx, job as Required<ComputeJob>));
      const measurement = claimOf.get(job);
      if (!measurement) return new Error(`measurement ${job.measurementPk} does not exist`);
      return settle(() => finishCalibration(ctx, job, measurement));
    }),
  );
}

/** A claimed measurement's computation and commit (see `computeCalibration`). */
async function finishCalibration(
  ctx: MeasurementsContext,
  job: ComputeJob,
  measurement: MeasurementToCompute,
): Promise<Computed> {
  if (measurement.done_id) return { calibrationId: measurement.done_id, created: false };
  const recipe = await releasedRecipe(ctx.db, job.recipeId);

  const { result, stored, computeMs } = runEngine(
    {
      source: measurement.source,
      payload: measurement.payload,
      payloadRaw: measurement.payload_raw,
      measurementId: measurement.measurement_id,
      serial: measurement.serial,
    },
    recipe,
  );
  const verdict = result?.verdict ?? 'unusable';
  const counts = verdict !== 'unusable';
  const now = ctx.clock();
  const stateAfter = (attemptsBefore: number) =>
    counts ? nextUnitState(verdict as 'pass' | 'fail', attemptsBefore, recipe, result?.checks ?? []) : null;
  const commitValues = (
    unit: { attempts: number; serial: string },
    next: ReturnType<typeof stateAfter>,
    expectedAttempts: number | null,
  ): StationCalibrationCommit => ({
    measurementPk: measurement.id,
    recipeId: recipe.id,
    unitId: measurement.unit_id,
    stationId: measurement.station_id,
    engineVersion: ENGINE_VERSION,
    verdict,
    offsetDeg: result?.offsetDeg ?? null,
    offsetCounts: result?.offsetCounts ?? null,
    attempt: counts ? unit.attempts + 1 : null,
    resultJson: JSON.stringify(stored),
    computeMs,
    computedAt: now,
    unitAttempts: next?.attempts ?? 0,
    unitStatus: next?.status ?? 'new',
    holdReason: next?.holdReason ?? null,
    passed: verdict === 'pass',
    counts,
    eventsChannel: EVENTS_CHANNEL,
    serial: unit.serial,
    measurementId: measurement.measurement_id,
    computedAtText: now.toISOString(),
    wakeChannel: JOBS_WAKE_CHANNEL,
    travelerQueue: queues.travelerRender.name,
    travelerPriority: travelerRenderPriority(now),
    chartQueue: queues.chartWatch.name,
    modelId: recipe.modelId,
    sendsJobs: !ctx.queue.silent,
    expectedAttempts,
  });

  // The usual case in one statement, its own transaction: the unit's next state is worked out from the
  // attempts the claim read, and the statement writes only if the unit still has them. A hold (whose
  // record and audit row go with it), a concurrent calibration of the same unit, or a second run of this
  // job takes the transaction below, which locks the unit before reading it.
  const guessed = stateAfter(measurement.unit_attempts);
  if (guessed?.status !== 'on_hold') {
    const committed = await commitStationCalibration(
      ctx.pool,
      commitValues(
        { attempts: measurement.unit_attempts, serial: measurement.unit_serial },
        guessed,
        measurement.unit_attempts,
      ),
    );
    if (committed) return { calibrationId: committed.id, created: true };
  }

  const calibrationId = await withTransaction(ctx.pool, async ({ client, tx, discard }) => {
    const unit = await lockUnitForCalibration(client, measurement.unit_id);
    const next = stateAfter(unit.attempts);
    const inserted = await commitStationCalibration(client, commitValues(unit, next, null));
    if (!inserted) {
      // Computed meanwhile by another run of this job: keep nothing, answer with the winner below.
      discard();
      return undefined;
    }
    if (next?.status === 'on_hold') {
      await placeAutomaticHold(tx, {
        unitId: measurement.unit_id,
        reason: next.holdReason!,
        source: 'retest_policy',
        now,
        setUnit: false,
        before: { status: unit.status, attempts: unit.attempts },
      });
    }
    // The traveler render (newest first) and the watched charts' update were queued by the statement
    // above, with the calibration (picked up at the chart worker's next poll, within 10 s, jobs/registry.ts:
    // alerts need no second-by-second wake-up, and a longer wait takes in more calibrations per run).
    return inserted.id;
  });
  if (calibrationId) return { calibrationId, created: true };
  const winner = (await calibrationOfKey(ctx.db, { measurementPk: measurement.id, recipeId: recipe.id }))!;
  return { calibrationId: winner.id, created: false };
}
