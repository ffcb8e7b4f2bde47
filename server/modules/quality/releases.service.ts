import type { SessionUser } from '#server/lib/auth';
import { insertAuditMany } from '../audit/audit.repository';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { lockUnitsForHold, markUnitReleased, type UnitHoldState } from '../units/units.repository';
import type { UnitRecord } from '../units/units.table';
import type { HoldDisposition, Release, ReleaseResult } from '#shared/schemas/quality';
import { qualityErrors } from './quality.errors';
import * as repo from './quality.repository';
import { idsOfSerials, type QualityContext } from './quality.service';

// Releases: a disposition per unit, the state it leaves the unit in, and the audit trail.

/** The unit's state after a release with this disposition (attempt budget from its active recipe). */
function releasedState(
  u: UnitHoldState,
  disposition: HoldDisposition,
): { status: UnitRecord['status']; attempts: number } {
  switch (disposition) {
    case 'use_as_is':
      return { status: 'calibrated', attempts: u.attempts };
    case 'rework':
      // Repaired hardware invalidates the old offset: the unit is calibrated afresh.
      return { status: 'new', attempts: 0 };
    case 'recalibrate':
      return {
        status: u.currentCalibrationId ? 'calibrated' : u.attempts > 0 ? 'failed' : 'new',
        attempts: 0,
      };
    case 'scrap':
      return { status: 'scrapped', attempts: u.attempts };
  }
}

/**
 * Releases held units with one disposition and a reason, all or none: every unit must be on hold, and
 * "use as is" needs a passing calibration. Recalibrate and rework restart the attempt count under the
 * active recipe's budget; scrap is final. Quality staff and engineers only.
 */
export async function releaseUnits(
  ctx: QualityContext,
  actor: SessionUser,
  input: Release,
): Promise<ReleaseResult> {
  if (actor.role === 'operator') throw qualityErrors.mayNotRelease();
  const now = ctx.clock();
  return ctx.db.transaction(async (tx) => {
    const ids = await idsOfSerials(tx, input.serials);
    const locked = await lockUnitsForHold(tx, ids);
    const scrapped = locked.filter((u) => u.status === 'scrapped');
    if (scrapped.length) throw qualityErrors.scrapped(scrapped.map((u) => u.serial));
    const notHeld = locked.filter((u) => u.status !== 'on_hold');
    if (notHeld.length) throw qualityErrors.notOnHold(notHeld.map((u) => u.serial));
    if (input.disposition === 'use_as_is') {
      const noPass = locked.filter((u) => !u.currentCalibrationId);
      if (noPass.length) throw qualityErrors.noPassToUse(noPass.map((u) => u.serial));
    }
    const budgets = new Map<string, number | null>();
    const budgetOf = async (modelId: string) => {
      if (!budgets.has(modelId))
        budgets.set(
          modelId,
          (await findModelWithActiveRecipe(tx, modelId))?.recipe?.body.maxAttempts ?? null,
        );
      return budgets.get(modelId)!;
    };
    const restarts = input.disposition === 'recalibrate' || input.disposition === 'rework';
    const out: ReleaseResult['units'] = [];
    const audits = [];
    for (const u of locked) {
      const next = releasedState(u, input.disposition);
      await markUnitReleased(tx, u.id, next, now);
      out.push({ serial: u.serial, status: next.status, attempts: next.attempts });
      audits.push({
        actorId: actor.id,
        actorName: actor.displayName,
        action: 'units.released',
        subjectType: 'unit',
        subjectId: u.id,
        reason: input.reason,
        before: { status: u.status, holdReason: u.holdReason, attempts: u.attempts },
        after: { status: next.status, attempts: next.attempts, disposition: input.disposition },
      });
    }
    // One budget per release record: units of one release usually share a model.
    const budget = restarts && locked[0] ? await budgetOf(locked[0].modelId) : null;
    await repo.closeOpenHolds(
      tx,
      locked.map((u) => u.id),
      {
        releasedAt: now,
        releasedBy: actor.id,
        releasedByName: actor.displayName,
        disposition: input.disposition,
        releaseReason: input.reason,
        attemptBudget: budget,
      },
    );
    await insertAuditMany(tx, audits);
    return { released: locked.length, disposition: input.disposition, units: out };
  });
}
