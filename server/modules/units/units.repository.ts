import { and, asc, desc, eq, gte, inArray, lte, or, sql, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '../../db/client';
import type { UnitSearchFilter, UnitSearchQuery } from '../../../shared/schemas/quality';
import { units, type UnitRecord } from './units.table';

/** The columns of a unit that holds and releases read and change. */
export type UnitHoldState = Pick<
  UnitRecord,
  'id' | 'serial' | 'status' | 'holdReason' | 'attempts' | 'currentCalibrationId' | 'modelId'
>;

const holdStateColumns = {
  id: units.id,
  serial: units.serial,
  status: units.status,
  holdReason: units.holdReason,
  attempts: units.attempts,
  currentCalibrationId: units.currentCalibrationId,
  modelId: units.modelId,
};

/** Ids of units by serial (normalised serials), for the serials that exist. */
export async function unitIdsBySerials(db: DbOrTx, serials: string[]): Promise<Map<string, string>> {
  const out = new Map<string, string>();
  for (let i = 0; i < serials.length; i += 5000) {
    const rows = await db
      .select({ id: units.id, serial: sql<string>`upper(${units.serial})` })
      .from(units)
      .where(inArray(sql`upper(${units.serial})`, serials.slice(i, i + 5000)));
    for (const r of rows) out.set(r.serial, r.id);
  }
  return out;
}

/**
 * Locks the units (in id order, so two bulk operations never deadlock) and returns their hold state.
 * Call inside a transaction.
 */
export async function lockUnitsForHold(tx: DbOrTx, ids: string[]): Promise<UnitHoldState[]> {
  const out: UnitHoldState[] = [];
  const sorted = [...ids].sort();
  for (let i = 0; i < sorted.length; i += 5000) {
    out.push(
      ...(await tx
        .select(holdStateColumns)
        .from(units)
        .where(inArray(units.id, sorted.slice(i, i + 5000)))
        .orderBy(units.id)
        .for('update')),
    );
  }
  return out;
}

/** Puts the units on hold with the reason (one statement per 5,000). */
export async function markUnitsHeld(tx: DbOrTx, ids: string[], reason: string, now: Date): Promise<void> {
  for (let i = 0; i < ids.length; i += 5000) {
    await tx
      .update(units)
      .set({ status: 'on_hold', holdReason: reason, updatedAt: now })
      .where(inArray(units.id, ids.slice(i, i + 5000)));
  }
}

/** Sets a released unit's status (and attempts, when a disposition restarts them). */
export async function markUnitReleased(
  tx: DbOrTx,
  id: string,
  next: { status: UnitRecord['status']; attempts: number },
  now: Date,
): Promise<void> {
  await tx
    .update(units)
    .set({ status: next.status, attempts: next.attempts, holdReason: null, updatedAt: now })
    .where(eq(units.id, id));
}

/** Serial, model and status of units, by id. */
export async function unitSummariesByIds(db: DbOrTx, ids: string[]) {
  if (ids.length === 0) return new Map<string, UnitHoldState>();
  const rows = await db.select(holdStateColumns).from(units).where(inArray(units.id, ids));
  return new Map(rows.map((r) => [r.id, r]));
}

const SORT_COLUMNS = {
  serial: sql`upper(${units.serial})`,
  status: units.status,
  createdAt: units.createdAt,
  updatedAt: units.updatedAt,
  offsetDeg: units.currentOffsetDeg,
} as const;

/**
 * The WHERE clause of a containment search. `calibrationFilter` is the measurements module's
 * condition on the unit's station calibrations (undefined when the search has none).
 */
export function unitSearchWhere(f: UnitSearchFilter, calibrationFilter: SQL | undefined): SQL | undefined {
  const conds: (SQL | undefined)[] = [
    f.modelId ? eq(units.modelId, f.modelId) : undefined,
    f.serialPrefix ? sql`upper(${units.serial}) like ${escapeLike(f.serialPrefix) + '%'}` : undefined,
    f.serialFrom ? sql`upper(${units.serial}) >= ${f.serialFrom}` : undefined,
    f.serialTo ? sql`upper(${units.serial}) <= ${f.serialTo}` : undefined,
    f.lot
      ? or(eq(units.hallBoardLot, f.lot), eq(units.magnetRingLot, f.lot), eq(units.statorLot, f.lot))
      : undefined,
    f.hallBoardLot ? eq(units.hallBoardLot, f.hallBoardLot) : undefined,
    f.magnetRingLot ? eq(units.magnetRingLot, f.magnetRingLot) : undefined,
    f.statorLot ? eq(units.statorLot, f.statorLot) : undefined,
    f.status ? eq(units.status, f.status) : undefined,
    f.builtFrom ? gte(units.createdAt, new Date(f.builtFrom)) : undefined,
    f.builtTo ? lte(units.createdAt, new Date(f.builtTo)) : undefined,
    f.programmingMismatch !== undefined ? eq(units.programmingMismatch, f.programmingMismatch) : undefined,
    calibrationFilter,
  ];
  return and(...conds.filter((c): c is SQL => c !== undefined));
}

function escapeLike(s: string): string {
  return s.replace(/[\\%_]/g, (c) => `\\${c}`);
}

/** One page of a containment search, with the total count (one statement). */
export async function searchUnitsPage(db: DbOrTx, q: UnitSearchQuery, where: SQL | undefined) {
  const order = q.dir === 'desc' ? desc(SORT_COLUMNS[q.sort]) : asc(SORT_COLUMNS[q.sort]);
  const rows = await db
    .select({
      id: units.id,
      serial: units.serial,
      modelId: units.modelId,
      workOrder: units.workOrder,
      hallBoardLot: units.hallBoardLot,
      magnetRingLot: units.magnetRingLot,
      statorLot: units.statorLot,
      status: units.status,
      holdReason: units.holdReason,
      attempts: units.attempts,
      currentOffsetDeg: units.currentOffsetDeg,
      programmingMismatch: units.programmingMismatch,
      createdAt: units.createdAt,
      updatedAt: units.updatedAt,
      total: sql<number>`count(*) over ()::int`,
    })
    .from(units)
    .where(where)
    .orderBy(order, asc(units.id))
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize);
  let total = rows[0]?.total ?? 0;
  if (rows.length === 0 && q.page > 1) {
    const [c] = await db
      .select({ n: sql<number>`count(*)::int` })
      .from(units)
      .where(where);
    total = c.n;
  }
  return { rows, total };
}

/** Every unit id a search finds (for a bulk hold of the whole result). */
export async function searchUnitIds(db: DbOrTx, where: SQL | undefined): Promise<string[]> {
  const rows = await db.select({ id: units.id }).from(units).where(where);
  return rows.map((r) => r.id);
}

/** The unit's id column, for other modules' conditions that correlate with a unit search. */
export const unitIdColumn = units.id;

/**
 * Registers a unit first seen at a station (the serial already normalised), or finds the one a
 * concurrent post registered meanwhile.
 */
export async function registerSeenUnit(
  tx: DbOrTx,
  serialKey: string,
  modelId: string,
): Promise<{ id: string; serial: string }> {
  const [inserted] = await tx
    .insert(units)
    .values({ serial: serialKey, modelId })
    .onConflictDoNothing()
    .returning({ id: units.id, serial: units.serial });
  const unit =
    inserted ??
    (
      await tx
        .select({ id: units.id, serial: units.serial })
        .from(units)
        .where(sql`upper(${units.serial}) = ${serialKey}`)
    )[0];
  if (!unit) throw new Error(`unit ${serialKey} neither inserted nor found`);
  return unit;
}
