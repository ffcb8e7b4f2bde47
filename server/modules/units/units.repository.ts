import { and, eq, gte, inArray, lte, or, sql, type SQL } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { UnitSearchFilter, UnitSearchQuery } from '#shared/schemas/quality';
import type { AnyPgColumn } from 'drizzle-orm/pg-core';
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

/** A list of ids or serials as one array parameter: one plan however long the list is. */
const uuidList = (ids: string[]) => sql`${sql.param(ids)}::uuid[]`;

/** Ids of units by serial (normalised serials), for the serials that exist (one statement). */
export async function unitIdsBySerials(db: DbOrTx, serials: string[]): Promise<Map<string, string>> {
  const out = new Map<string, string>();
  if (serials.length === 0) return out;
  const rows = await db
    .select({ id: units.id, serial: sql<string>`upper(${units.serial})` })
    .from(units)
    .where(sql`upper(${units.serial}) = any(${sql.param(serials)}::text[])`);
  for (const r of rows) out.set(r.serial, r.id);
  return out;
}

/**
 * Locks the units (in id order, so two bulk operations never deadlock) and returns their hold state,
 * in one statement. Call inside a transaction.
 */
export async function lockUnitsForHold(tx: DbOrTx, ids: string[]): Promise<UnitHoldState[]> {
  if (ids.length === 0) return [];
  return tx
    .select(holdStateColumns)
    .from(units)
    .where(sql`${units.id} = any(${uuidList(ids)})`)
    .orderBy(units.id)
    .for('update');
}

/** Puts the units on hold with the reason (one statement). */
export async function markUnitsHeld(tx: DbOrTx, ids: string[], reason: string, now: Date): Promise<void> {
  if (ids.length === 0) return;
  await tx
    .update(units)
    .set({ status: 'on_hold', holdReason: reason, updatedAt: now })
    .where(sql`${units.id} = any(${uuidList(ids)})`);
}

/**
 * Locks the units named (by id or by serial, normalised) in id order and puts every one that is
 * neither on hold nor scrapped on hold with the reason: one statement, whatever the number of units.
 * Returns each unit found with its state before, and whether this statement held it.
 */
export async function lockAndHoldUnits(
  tx: DbOrTx,
  which: { ids: string[] } | { serials: string[] },
  reason: string,
  now: Date,
): Promise<(UnitHoldState & { held: boolean })[]> {
  const match =
    'ids' in which
      ? sql`${units.id} = any(${uuidList(which.ids)})`
      : sql`upper(${units.serial}) = any(${sql.param(which.serials)}::text[])`;
  const { rows } = await tx.execute<{
    id: string;
    serial: string;
    status: UnitRecord['status'];
    hold_reason: string | null;
    attempts: number;
    current_calibration_id: string | null;
    model_id: string;
    held: boolean;
  }>(sql`
    with locked as (
      select ${units.id} as id, upper(${units.serial}) as serial, ${units.status} as status,
             ${units.holdReason} as hold_reason, ${units.attempts} as attempts,
             ${units.currentCalibrationId} as current_calibration_id, ${units.modelId} as model_id
        from ${units} where ${match} order by ${units.id} for update
    ), held as (
      update ${units} set status = 'on_hold', hold_reason = ${reason}, updated_at = ${now.toISOString()}::timestamptz
        from locked where ${units.id} = locked.id and locked.status not in ('on_hold', 'scrapped')
      returning ${units.id} as id
    )
    select locked.*, held.id is not null as held from locked left join held on held.id = locked.id
     order by locked.id`);
  return rows.map((r) => ({
    id: r.id,
    serial: r.serial,
    status: r.status,
    holdReason: r.hold_reason,
    attempts: r.attempts,
    currentCalibrationId: r.current_calibration_id,
    modelId: r.model_id,
    held: r.held,
  }));
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

/**
 * The matching units as a materialised set of ids, then ordered. The fence matters: planned as one
 * join with `ORDER BY … LIMIT`, PostgreSQL walked the whole serial index in order and probed each
 * unit's calibrations (1 s on a million units, EXPLAIN in DEVELOPERS.md); planned alone, the filter
 * joins two index-only scans (lot, station + time) and only the matches are read and sorted.
 */
function orderedHits(
  db: DbOrTx,
  q: Pick<UnitSearchQuery, 'sort' | 'dir'>,
  where: SQL | undefined,
  select: SQL,
) {
  const dir = sql.raw(q.dir === 'desc' ? 'desc' : 'asc');
  return sql`with hits as materialized (${db.select({ id: units.id }).from(units).where(where)})
    select ${select} from hits join ${units} on ${units.id} = hits.id
     order by ${SORT_COLUMNS[q.sort]} ${dir}, ${units.id}`;
}

const pageColumns = {
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
};

/** One page of a containment search, in order, with the total count of the whole result. */
export async function searchUnitsPage(db: DbOrTx, q: UnitSearchQuery, where: SQL | undefined) {
  const { rows: hits } = await db.execute<{ id: string; total: number }>(
    sql`${orderedHits(db, q, where, sql`${units.id} as id, count(*) over ()::int as total`)}
        limit ${q.pageSize} offset ${(q.page - 1) * q.pageSize}`,
  );
  let total = hits[0]?.total ?? 0;
  if (hits.length === 0 && q.page > 1) {
    const [c] = await db
      .select({ n: sql<number>`count(*)::int` })
      .from(units)
      .where(where);
    total = c.n;
  }
  if (hits.length === 0) return { rows: [], total };
  const found = await db
    .select(pageColumns)
    .from(units)
    .where(sql`${units.id} = any(${uuidList(hits.map((h) => h.id))})`);
  const byId = new Map(found.map((r) => [r.id, r]));
  return { rows: hits.map((h) => byId.get(h.id)!).filter(Boolean), total };
}

/** A unit of a search as the CSV export writes it (times as ISO 8601 text in UTC). */
export interface SearchCsvRow {
  serial: string;
  model_id: string;
  work_order: string | null;
  hall_board_lot: string | null;
  magnet_ring_lot: string | null;
  stator_lot: string | null;
  status: string;
  hold_reason: string | null;
  attempts: number;
  current_offset_deg: number | null;
  programming_mismatch: boolean;
  created_at: string;
  updated_at: string;
}

const isoUtc = (column: AnyPgColumn) =>
  sql`to_char(${column} at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"')`;

/**
 * Every unit of a search, in order, through one cursor in a read-only snapshot: `onRows` gets
 * `batchSize` rows at a time (awaited, so a slow reader holds the next fetch back), memory stays flat
 * and no row is skipped or repeated however the units change meanwhile.
 */
export async function streamSearchRows(
  db: Db,
  q: Pick<UnitSearchQuery, 'sort' | 'dir'>,
  where: SQL | undefined,
  batchSize: number,
  onRows: (rows: SearchCsvRow[]) => Promise<void> | void,
): Promise<void> {
  const select = sql`${units.serial} as serial, ${units.modelId} as model_id, ${units.workOrder} as work_order,
    ${units.hallBoardLot} as hall_board_lot, ${units.magnetRingLot} as magnet_ring_lot, ${units.statorLot} as stator_lot,
    ${units.status}::text as status, ${units.holdReason} as hold_reason, ${units.attempts} as attempts,
    ${units.currentOffsetDeg} as current_offset_deg, ${units.programmingMismatch} as programming_mismatch,
    ${isoUtc(units.createdAt)} as created_at, ${isoUtc(units.updatedAt)} as updated_at`;
  const n = sql.raw(String(Math.max(1, Math.floor(batchSize))));
  await db.transaction(
    async (tx) => {
      await tx.execute(sql`declare search_rows no scroll cursor for ${orderedHits(tx, q, where, select)}`);
      for (;;) {
        const { rows } = await tx.execute<SearchCsvRow & Record<string, unknown>>(
          sql`fetch forward ${n} from search_rows`,
        );
        if (rows.length) await onRows(rows);
        if (rows.length < batchSize) return;
      }
    },
    { isolationLevel: 'repeatable read', accessMode: 'read only' },
  );
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
