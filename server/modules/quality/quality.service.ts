import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import type { Logger } from '#server/lib/logger';
import type { Mailer } from '../mail/mail.service';
import { insertAudit, insertAuditMany } from '../audit/audit.repository';
import {
  findModelWithActiveRecipe,
  findRecipeRow,
  listModelRows,
  listRecipeRows,
} from '../recipes/recipes.repository';
import { listUsers } from '../users/users.repository';
import { ENGINE_VERSION } from '#shared/calibration/engine';
import { storedMeasurement } from '../measurements/measurements.repository';
import { CalibrationInputError } from '#shared/calibration';
import { traceMeasurement } from '#shared/calibration/trace';
import type { Measurement } from '#shared/schemas/measurement';
import type { RecipeRecord } from '../recipes/recipes.table';
import { stationCalibrationFilter } from '../calibrations/calibrations.repository';
import {
  lockAndHoldUnits,
  lockUnitsForHold,
  markUnitReleased,
  markUnitsHeld,
  searchUnitIds,
  searchUnitsPage,
  streamSearchRows,
  unitIdColumn,
  unitIdsBySerials,
  unitSearchWhere,
  unitSummariesByIds,
  type UnitHoldState,
} from '../units/units.repository';
import type { UnitRecord } from '../units/units.table';
import type { Check } from '#shared/schemas/calibration-result';
import { failureStep, repairHoldReason } from '#shared/calibration/check-guide';
import {
  investigationReference,
  type BulkHold,
  type BulkHoldResult,
  type HeldUnitRow,
  type HoldDisposition,
  type MeasurementTrace,
  type Release,
  type ReleaseResult,
  type SearchChoices,
  type UnitSearchFilter,
  type UnitSearchPage,
  type UnitSearchQuery,
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

async function idsOfSerials(db: DbOrTx, serials: string[]): Promise<string[]> {
  const unique = [...new Set(serials)];
  const found = await unitIdsBySerials(db, unique);
  const missing = unique.filter((s) => !found.has(s));
  if (missing.length) throw qualityErrors.unknownSerials(missing);
  return unique.map((s) => found.get(s)!);
}

function searchWhere(f: UnitSearchFilter) {
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

/** One page of a containment search with the total count. */
export async function searchUnits(db: Db, q: UnitSearchQuery): Promise<UnitSearchPage> {
  const { rows, total } = await searchUnitsPage(db, q, searchWhere(q));
  const models = new Map((await listModelRows(db)).map((m) => [m.id, m.code]));
  return {
    rows: rows.map(({ modelId, ...r }) => ({
      ...r,
      modelCode: models.get(modelId) ?? '',
      createdAt: r.createdAt.toISOString(),
      updatedAt: r.updatedAt.toISOString(),
    })),
    total,
    page: q.page,
    pageSize: q.pageSize,
  };
}

/**
 * The search form's lists the line's own lists do not give: people who may stand at a panel (by
 * name), every recipe version that was released, and the engine versions.
 */
export async function searchChoices(db: Db): Promise<SearchChoices> {
  const [people, recipes, models] = await Promise.all([listUsers(db), listRecipeRows(db), listModelRows(db)]);
  const codes = new Map(models.map((m) => [m.id, m.code]));
  return {
    operators: people
      .filter((p) => p.role !== 'admin')
      .map((p) => ({ id: p.id, name: p.displayName }))
      .sort((a, b) => a.name.localeCompare(b.name)),
    recipes: recipes
      .filter((r) => r.status === 'released' || r.status === 'retired')
      .map((r) => ({ id: r.id, modelCode: codes.get(r.modelId) ?? '', version: r.version, status: r.status }))
      .sort((a, b) => a.modelCode.localeCompare(b.modelCode) || b.version - a.version),
    engineVersions: [ENGINE_VERSION],
  };
}

const CSV_COLUMNS = [
  'serial',
  'model',
  'work_order',
  'hall_board_lot',
  'magnet_ring_lot',
  'stator_lot',
  'status',
  'hold_reason',
  'attempts',
  'offset_deg',
  'programming_mismatch',
  'registered_at',
  'updated_at',
];

function csvCell(v: unknown): string {
  if (v === null || v === undefined) return '';
  const s = String(v);
  // A leading = + - @ would be read as a formula by a spreadsheet.
  const safe = /^[=+\-@]/.test(s) && !/^-?\d/.test(s) ? `'${s}` : s;
  return /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/**
 * The whole result of a search as CSV, in the search's order, read through one cursor 2,000 rows at a
 * time and handed to `write` as it comes, so memory stays flat however many units match.
 */
export async function exportSearchCsv(
  db: Db,
  q: UnitSearchQuery,
  write: (chunk: string) => Promise<void> | void,
): Promise<number> {
  const models = new Map((await listModelRows(db)).map((m) => [m.id, m.code]));
  await write(CSV_COLUMNS.join(',') + '\r\n');
  let n = 0;
  await streamSearchRows(db, q, searchWhere(q), 2000, async (rows) => {
    const lines = rows.map((r) =>
      [
        r.serial,
        models.get(r.model_id) ?? '',
        r.work_order,
        r.hall_board_lot,
        r.magnet_ring_lot,
        r.stator_lot,
        r.status,
        r.hold_reason,
        r.attempts,
        r.current_offset_deg,
        r.programming_mismatch,
        r.created_at,
        r.updated_at,
      ]
        .map(csvCell)
        .join(','),
    );
    n += lines.length;
    await write(lines.join('\r\n') + '\r\n');
  });
  return n;
}

/** The raw data behind a measurement's numbers (see `traceMeasurement`), with its stored hash. */
export async function measurementTrace(db: Db, measurementId: string): Promise<MeasurementTrace> {
  const m = await storedMeasurement(db, measurementId);
  if (!m) throw qualityErrors.measurementNotFound(measurementId);
  const recipe = m.recipeId ? await findRecipeRow(db, m.recipeId) : undefined;
  let segments: MeasurementTrace['segments'] = [];
  let problem: string | null = null;
  if (!recipe) problem = 'This measurement has no station result yet, so there is no recipe to read it with.';
  else {
    try {
      segments = traceMeasurement(m.payload as Measurement, recipe.body);
    } catch (e) {
      if (!(e instanceof CalibrationInputError)) throw e;
      problem = `The data could not be used: ${e.message}`;
    }
  }
  return {
    measurementId: m.measurementId,
    serial: m.serial,
    source: m.source,
    receivedAt: m.receivedAt.toISOString(),
    payloadSha256: m.payloadSha256,
    recipe: recipe ? { id: recipe.id, version: recipe.version, body: recipe.body } : null,
    segments,
    problem,
  };
}

/** The measurement exactly as the station posted it (JSON text or capture CSV). */
export async function measurementAsPosted(db: Db, measurementId: string) {
  const m = await storedMeasurement(db, measurementId);
  if (!m) throw qualityErrors.measurementNotFound(measurementId);
  return {
    text: m.payloadRaw ?? JSON.stringify(m.payload),
    contentType: m.source === 'capture' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8',
    fileName: `${m.serial}-${m.measurementId}.${m.source === 'capture' ? 'csv' : 'json'}`,
    payloadSha256: m.payloadSha256,
  };
}
