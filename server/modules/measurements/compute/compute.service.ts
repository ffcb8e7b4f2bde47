import { ENGINE_VERSION } from '#shared/calibration';
import { JOBS_WAKE_CHANNEL, queues, travelerRenderPriority } from '#jobs/queues';
import { withTransaction } from '#server/db/transaction';
import { EVENTS_CHANNEL } from '#server/modules/events/event-hub';
import { releasedRecipe } from '#server/modules/recipes/recipes.repository';
import { nextUnitState, placeAutomaticHold } from '#server/modules/quality/quality.service';
import { calibrationOfKey } from '#server/modules/calibrations/calibrations.repository';
import type { MeasurementsContext } from '../measurements.context';
import { recomputeCalibration, type RecomputeRequest } from '../recompute/recompute.service';
import { claimMeasurement, commitStationCalibration, lockUnitForCalibration } from './compute.repository';
import { runEngine } from './run-engine';

/**
 * Computes one measurement with one recipe version and commits the calibration, the unit's new
 * status, the follow-on traveler job and the event in one transaction. Safe to run twice: a second
 * run finds the calibration (unique per measurement and recipe version) and does nothing.
 * Round trips are kept few on purpose (each costs more than the computation itself).
 */
export async function computeCalibration(
  ctx: MeasurementsContext,
  job: { measurementPk: string; recipeId: string; recompute?: RecomputeRequest },
): Promise<{ calibrationId: string; created: boolean }> {
  if (job.recompute) return recomputeCalibration(ctx, job as Required<typeof job>);
  const measurement = await claimMeasurement(ctx.pool, {
    measurementPk: job.measurementPk,
    recipeId: job.recipeId,
    engineVersion: ENGINE_VERSION,
    eventsChannel: EVENTS_CHANNEL,
    atText: ctx.clock().toISOString(),
  });
  if (!measurement) throw new Error(`measurement ${job.measurementPk} does not exist`);
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
  const now = ctx.clock();

  const calibrationId = await withTransaction(ctx.pool, async ({ client, tx, discard }) => {
    const unit = await lockUnitForCalibration(client, measurement.unit_id);
    const counts = verdict !== 'unusable';
    const attempt = counts ? unit.attempts + 1 : null;
    const next = counts
      ? nextUnitState(verdict as 'pass' | 'fail', unit.attempts, recipe, result?.checks ?? [])
      : null;
    const inserted = await commitStationCalibration(client, {
      measurementPk: measurement.id,
      recipeId: recipe.id,
      unitId: measurement.unit_id,
      stationId: measurement.station_id,
      engineVersion: ENGINE_VERSION,
      verdict,
      offsetDeg: result?.offsetDeg ?? null,
      offsetCounts: result?.offsetCounts ?? null,
      attempt,
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
    });
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
    // above, with the calibration (picked up at the chart worker's next poll, within 2 s: alerts need
    // no millisecond wake-up).
    return inserted.id;
  });
  if (calibrationId) return { calibrationId, created: true };
  const winner = (await calibrationOfKey(ctx.db, { measurementPk: measurement.id, recipeId: recipe.id }))!;
  return { calibrationId: winner.id, created: false };
}
