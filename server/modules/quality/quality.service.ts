import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import type { Logger } from '#server/lib/logger';
import type { Mailer } from '../mail/mail.service';
import { insertAudit, insertAuditMany } from '../audit/audit.repository';
import { listModelRows } from '../recipes/recipes.repository';
import type { RecipeRecord } from '../recipes/recipes.table';
import { stationCalibrationFilter } from '../calibrations/calibrations.repository';
import {
  lockAndHoldUnits,
  lockUnitsForHold,
  markUnitsHeld,
  searchUnitIds,
  unitIdColumn,
  unitIdsBySerials,
  unitSearchWhere,
  unitSummariesByIds,
} from '../units/units.repository';
import type { UnitRecord } from '../units/units.table';
import type { Check } from '#shared/schemas/calibration-result';
import { failureStep, repairHoldReason } from '#shared/calibration/check-guide';
import {
  investigationReference,
  type BulkHold,
  type BulkHoldResult,
  type HeldUnitRow,
  type UnitSearchFilter,
} from '#shared/schemas/quality';
import { qualityErrors } from './quality.errors';
import * as repo from './quality.repository';
import { openInvestigationIn, notifyQualityGroup } from './investigations.service';

export interface QualityContext {
  db: Db;
  clock: () => Date;
  mailer: Mailer;
  logger: Logger;
  publicUrl: string;
}

/** The most units one bulk hold or release takes (a lot is a few thousand). */
export const BULK_LIMIT = 20_000;

/**
 * The retest policy. A pass makes the unit calibrated with this offset. A fail leaves it failed for a
 * retest while attempts remain; at the recipe's maximum it goes on hold, with the reason (audited).
 */
export function nextUnitState(
  verdict: 'pass' | 'fail',
  attemptsBefore: number,
  recipe: Pick<RecipeRecord, 'version' | 'body'>,
  checks: readonly Check[] = [],
): { attempts: number; status: UnitRecord['status']; holdReason: string | null } {
  const attempts = attemptsBefore + 1;
  if (verdict === 'pass') return { attempts, status: 'calibrated', holdReason: null };
  // A failure that a retest cannot mend (a dead sensor, swapped phases, an offset far out) goes to
  // repair at once instead of using up the remaining attempts.
  const step = failureStep(checks);
  if (step?.remedy === 'repair') return { attempts, status: 'on_hold', holdReason: repairHoldReason(step) };
  const max = recipe.body.maxAttempts;
  if (attempts >= max) {
    return {
      attempts,
      status: 'on_hold',
      holdReason: `${attempts} calibration attempts without a pass (recipe v${recipe.version} allows ${max})`,
    };
  }
  return { attempts, status: 'failed', holdReason: null };
}

/** The reason an automatic hold gives for a programming read-back that differs from what was written. */
export function mismatchHoldReason(expected: number, written: number, readBack: number): string {
  return `Programming read-back mismatch: expected ${expected}, written ${written}, read back ${readBack} counts`;
}

/**
 * Records a hold the line placed by itself (the retest policy, a programming mismatch), inside the
 * caller's transaction. With `setUnit` the unit is put on hold here; the retest policy has already
 * set it in its own statement. A scrapped unit or one already on hold is left as it is.
 */
export async function placeAutomaticHold(
  tx: DbOrTx,
  hold: {
    unitId: string;
    reason: string;
    source: 'retest_policy' | 'programming_mismatch';
    now: Date;
    setUnit: boolean;
    before?: unknown;
  },
): Promise<boolean> {
  if (hold.setUnit) {
    const [unit] = await lockUnitsForHold(tx, [hold.unitId]);
    if (!unit || unit.status === 'scrapped' || unit.status === 'on_hold') return false;
    await markUnitsHeld(tx, [unit.id], hold.reason, hold.now);
  }
  const added = await repo.insertHolds(tx, [
    { unitId: hold.unitId, reason: hold.reason, source: hold.source, heldAt: hold.now },
  ]);
  await insertAudit(tx, {
    action:
      hold.source === 'retest_policy' ? 'units.held_by_retest_policy' : 'units.held_by_programming_mismatch',
    subjectType: 'unit',
    subjectId: hold.unitId,
    reason: hold.reason,
    before: hold.before ?? null,
    after: { status: 'on_hold' },
  });
  return added > 0;
}

export async function idsOfSerials(db: DbOrTx, serials: string[]): Promise<string[]> {
  const unique = [...new Set(serials)];
  const found = await unitIdsBySerials(db, unique);
  const missing = unique.filter((s) => !found.has(s));
  if (missing.length) throw qualityErrors.unknownSerials(missing);
  return unique.map((s) => found.get(s)!);
}

export function searchWhere(f: UnitSearchFilter) {
  return unitSearchWhere(f, stationCalibrationFilter(unitIdColumn, f));
}

/**
 * Holds a selection or a whole search result, in one transaction: every unit gets its hold record and
 * its own audit entry, or none does. Safe to repeat: a unit already on hold stays held once (it is
 * only linked to the investigation); a scrapped unit is left alone and counted. Set-based: each step
 * (find, lock in id order, mark held, open the holds, audit, link) is one statement over every unit,
 * with the ids sent as one array, so 10,000 units take about as many round trips as one.
 */
export async function bulkHold(
  ctx: QualityContext,
  actor: SessionUser,
  input: BulkHold,
): Promise<BulkHoldResult> {
  const now = ctx.clock();
  let opened: Awaited<ReturnType<typeof openInvestigationIn>> | null = null;
  const result = await ctx.db.transaction(async (tx) => {
    let which: { ids: string[] } | { serials: string[] };
    if (input.serials) which = { serials: [...new Set(input.serials)] };
    else {
      const ids = await searchUnitIds(tx, searchWhere(input.search!));
      if (ids.length === 0) throw qualityErrors.nothingFound();
      if (ids.length > BULK_LIMIT) throw qualityErrors.tooMany(ids.length, BULK_LIMIT);
      which = { ids };
    }
    let investigation: { id: string; reference: string } | null = null;
    if (input.newInvestigation) {
      opened = await openInvestigationIn(tx, actor, input.newInvestigation, now);
      investigation = { id: opened.id, reference: investigationReference(opened.number) };
    } else if (input.investigationId) {
      const inv = await repo.findInvestigation(tx, input.investigationId);
      if (!inv) throw qualityErrors.investigationNotFound();
      if (inv.status === 'closed')
        throw qualityErrors.investigationClosed(investigationReference(inv.number));
      investigation = { id: inv.id, reference: investigationReference(inv.number) };
    }
    // Locks in id order and marks the units held in one statement; an unknown serial undoes it all.
    const locked = await lockAndHoldUnits(tx, which, input.reason, now);
    if ('serials' in which) {
      const found = new Set(locked.map((u) => u.serial));
      const missing = which.serials.filter((s) => !found.has(s));
      if (missing.length) throw qualityErrors.unknownSerials(missing);
    }
    const toHold = locked.filter((u) => u.held);
    const alreadyHeld = locked.filter((u) => u.status === 'on_hold').length;
    const scrapped = locked.length - toHold.length - alreadyHeld;
    await repo.insertPersonHolds(
      tx,
      toHold.map((u) => u.id),
      {
        reason: input.reason,
        heldBy: actor.id,
        heldByName: actor.displayName,
        heldAt: now,
        investigationId: investigation?.id ?? null,
      },
    );
    await insertAuditMany(
      tx,
      toHold.map((u) => ({
        actorId: actor.id,
        actorName: actor.displayName,
        action: 'units.held',
        subjectType: 'unit',
        subjectId: u.id,
        reason: input.reason,
        before: { status: u.status, holdReason: u.holdReason, attempts: u.attempts },
        after: {
          status: 'on_hold',
          holdReason: input.reason,
          investigation: investigation?.reference ?? null,
        },
      })),
    );
    if (investigation) {
      await repo.linkUnits(
        tx,
        investigation.id,
        locked.filter((u) => u.status !== 'scrapped').map((u) => u.id),
        actor.id,
      );
    }
    return { held: toHold.length, alreadyHeld, scrapped, investigation };
  });
  if (opened) await notifyQualityGroup(ctx, opened, 'opened');
  return result;
}

/** Units on hold now, oldest hold first: age, reason, who, and the investigation it belongs to. */
export async function heldUnits(ctx: Pick<QualityContext, 'db' | 'clock'>): Promise<HeldUnitRow[]> {
  const rows = await repo.openHolds(ctx.db, 2000);
  const unitsById = await unitSummariesByIds(
    ctx.db,
    rows.map((r) => r.hold.unitId),
  );
  const models = new Map((await listModelRows(ctx.db)).map((m) => [m.id, m.code]));
  const now = ctx.clock().getTime();
  return rows
    .filter((r) => unitsById.get(r.hold.unitId)?.status === 'on_hold')
    .map((r) => {
      const u = unitsById.get(r.hold.unitId)!;
      return {
        holdId: r.hold.id,
        unitId: u.id,
        serial: u.serial,
        modelCode: models.get(u.modelId) ?? '',
        reason: r.hold.reason,
        source: r.hold.source,
        heldBy:
          r.hold.heldByName ??
          (r.hold.source === 'retest_policy'
            ? 'Retest policy (automatic)'
            : r.hold.source === 'programming_mismatch'
              ? 'Programming check (automatic)'
              : null),
        heldAt: r.hold.heldAt.toISOString(),
        ageHours: Math.max(0, Math.floor((now - r.hold.heldAt.getTime()) / 3_600_000)),
        investigation: r.investigation
          ? {
              id: r.investigation.id,
              reference: investigationReference(r.investigation.number),
              title: r.investigation.title,
            }
          : null,
      };
    });
}
