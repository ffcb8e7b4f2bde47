import type { SessionUser } from '#server/lib/auth';
import { withTransaction } from '#server/db/transaction';
import { ENGINE_VERSION } from '#shared/calibration';
import type { Measurement } from '#shared/schemas/measurement';
import { insertAudit } from '#server/modules/audit/audit.repository';
import { findModelRow, findRecipeRow, releasedRecipe } from '#server/modules/recipes/recipes.repository';
import { findUnitBySerial } from '#server/modules/units/units.service';
import { calibrationOfKey, insertCalibration } from '#server/modules/calibrations/calibrations.repository';
import { measurementErrors } from '../measurements.errors';
import { measurementByPk, measurementIdentity } from '../measurements.repository';
import type { MeasurementsContext } from '../measurements.context';
import { runEngine } from '../compute/run-engine';

/** Who asked for a recomputation, and why (carried in the compute job). */
export interface RecomputeRequest {
  requestedBy: string;
  reason: string;
}

/** Asks for a recomputation of a stored measurement with a released recipe version of its model. */
export async function requestRecompute(
  ctx: MeasurementsContext,
  actor: SessionUser,
  measurementId: string,
  input: { recipeId?: string; reason: string },
) {
  const m = await measurementIdentity(ctx.db, measurementId);
  const unit = m && (await findUnitBySerial(ctx.db, m.serial));
  const model = unit && (await findModelRow(ctx.db, unit.modelId));
  if (!m || !unit || !model) throw measurementErrors.notFoundAnywhere(measurementId);
  const recipeId = input.recipeId ?? model.activeRecipeId;
  if (!recipeId) throw measurementErrors.recipeNotUsable('the model has no released recipe');
  const recipe = await findRecipeRow(ctx.db, recipeId);
  if (!recipe || recipe.modelId !== unit.modelId)
    throw measurementErrors.recipeNotUsable("it is not a recipe of this unit's model");
  if (recipe.status === 'draft') throw measurementErrors.recipeNotUsable('it is a draft; release it first');
  const done = await calibrationOfKey(ctx.db, { measurementPk: m.id, recipeId: recipe.id });
  if (!done) {
    await ctx.queue.send('calibrationCompute', {
      measurementPk: m.id,
      recipeId: recipe.id,
      recompute: { requestedBy: actor.id, reason: input.reason },
    });
  }
  return {
    measurementId,
    serial: m.serial,
    recipe: { id: recipe.id, version: recipe.version },
    engineVersion: ENGINE_VERSION,
    status: done ? ('computed' as const) : ('queued' as const),
    calibrationId: done?.id ?? null,
  };
}

/**
 * An engineer's recomputation: the stored measurement with a chosen released recipe version and this
 * engine. It adds a calibration row (purpose 'recompute') and an audit entry, and changes nothing
 * else: the unit's status, attempts and programmed offset stay what the station's calibration made
 * them. Once per (measurement, recipe version, engine version).
 */
export async function recomputeCalibration(
  ctx: MeasurementsContext,
  job: { measurementPk: string; recipeId: string; recompute: RecomputeRequest },
): Promise<{ calibrationId: string; created: boolean }> {
  const m = await measurementByPk(ctx.db, job.measurementPk);
  if (!m) throw new Error(`measurement ${job.measurementPk} does not exist`);
  const recipe = await releasedRecipe(ctx.db, job.recipeId);
  const key = { measurementPk: m.id, recipeId: recipe.id };
  const done = await calibrationOfKey(ctx.db, key);
  if (done) return { calibrationId: done.id, created: false };
  const { result, stored, computeMs } = runEngine({ ...m, payload: m.payload as Measurement }, recipe);
  return withTransaction(ctx.pool, async ({ tx }) => {
    const row = await insertCalibration(tx, {
      measurementPk: m.id,
      recipeId: recipe.id,
      unitId: m.unitId,
      stationId: m.stationId,
      engineVersion: ENGINE_VERSION,
      verdict: result?.verdict ?? 'unusable',
      purpose: 'recompute',
      requestedBy: job.recompute.requestedBy,
      reason: job.recompute.reason,
      offsetDeg: result?.offsetDeg ?? null,
      offsetCounts: result?.offsetCounts ?? null,
      attempt: null,
      result: stored,
      computeMs,
      computedAt: ctx.clock(),
    });
    if (!row) {
      const winner = (await calibrationOfKey(tx, key))!;
      return { calibrationId: winner.id, created: false };
    }
    await insertAudit(tx, {
      actorId: job.recompute.requestedBy,
      action: 'calibrations.recomputed',
      subjectType: 'measurement',
      subjectId: m.measurementId,
      reason: job.recompute.reason,
      after: {
        calibrationId: row.id,
        recipeVersion: recipe.version,
        engineVersion: ENGINE_VERSION,
        verdict: result?.verdict ?? 'unusable',
        offsetDeg: result?.offsetDeg ?? null,
      },
    });
    return { calibrationId: row.id, created: true };
  });
}
