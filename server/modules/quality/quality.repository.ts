import { and, asc, desc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import {
  investigationComments,
  investigations,
  investigationUnits,
  savedSearches,
  unitHolds,
  type InvestigationRecord,
  type SavedSearchRecord,
  type UnitHoldRecord,
} from './quality.table';

export async function insertHolds(tx: DbOrTx, rows: (typeof unitHolds.$inferInsert)[]): Promise<number> {
  let n = 0;
  for (let i = 0; i < rows.length; i += 1000) {
    // The partial unique index keeps one open hold per unit: a repeat adds nothing.
    const done = await tx
      .insert(unitHolds)
      .values(rows.slice(i, i + 1000))
      .onConflictDoNothing()
      .returning({ id: unitHolds.id });
    n += done.length;
  }
  return n;
}

/**
 * Opens a person's hold on each unit in one statement (the ids travel as one array). A unit that
 * already has an open hold keeps it (the partial unique index): the repeat adds nothing.
 */
export async function insertPersonHolds(
  tx: DbOrTx,
  unitIds: string[],
  hold: { reason: string; heldBy: string; heldByName: string; heldAt: Date; investigationId: string | null },
): Promise<number> {
  if (unitIds.length === 0) return 0;
  const res = await tx.execute(sql`
    insert into ${unitHolds} (unit_id, reason, source, held_by, held_by_name, held_at, investigation_id)
    select u, ${hold.reason}, 'person', ${hold.heldBy}::uuid, ${hold.heldByName}, ${hold.heldAt.toISOString()}::timestamptz,
           ${hold.investigationId}::uuid
      from unnest(${sql.param(unitIds)}::uuid[]) as u
    on conflict do nothing`);
  return res.rowCount ?? 0;
}

export async function closeOpenHolds(
  tx: DbOrTx,
  unitIds: string[],
  release: Pick<
    UnitHoldRecord,
    'releasedAt' | 'releasedBy' | 'releasedByName' | 'disposition' | 'releaseReason' | 'attemptBudget'
  >,
): Promise<void> {
  for (let i = 0; i < unitIds.length; i += 5000) {
    await tx
      .update(unitHolds)
      .set(release)
      .where(and(inArray(unitHolds.unitId, unitIds.slice(i, i + 5000)), isNull(unitHolds.releasedAt)));
  }
}

export async function openHolds(db: DbOrTx, limit: number) {
  return db
    .select({ hold: unitHolds, investigation: investigations })
    .from(unitHolds)
    .leftJoin(investigations, eq(investigations.id, unitHolds.investigationId))
    .where(isNull(unitHolds.releasedAt))
    .orderBy(asc(unitHolds.heldAt))
    .limit(limit);
}

export async function insertInvestigation(
  tx: DbOrTx,
  values: typeof investigations.$inferInsert,
): Promise<InvestigationRecord> {
  const [row] = await tx.insert(investigations).values(values).returning();
  return row;
}

export async function findInvestigation(db: DbOrTx, id: string, lock = false) {
  const q = db.select().from(investigations).where(eq(investigations.id, id));
  const [row] = lock ? await q.for('update') : await q;
  return row;
}

export async function updateInvestigationRow(
  tx: DbOrTx,
  id: string,
  patch: Partial<typeof investigations.$inferInsert>,
): Promise<InvestigationRecord> {
  const [row] = await tx.update(investigations).set(patch).where(eq(investigations.id, id)).returning();
  return row;
}

export async function listInvestigationRows(db: DbOrTx) {
  return db
    .select({
      inv: investigations,
      unitCount: sql<number>`(select count(*)::int from investigation_units iu where iu.investigation_id = ${investigations.id})`,
    })
    .from(investigations)
    .orderBy(desc(investigations.createdAt))
    .limit(500);
}

export async function linkUnits(tx: DbOrTx, investigationId: string, unitIds: string[], by: string | null) {
  if (unitIds.length === 0) return;
  await tx.execute(sql`
    insert into ${investigationUnits} (investigation_id, unit_id, added_by)
    select ${investigationId}::uuid, u, ${by}::uuid from unnest(${sql.param(unitIds)}::uuid[]) as u
    on conflict do nothing`);
}

export async function linkedUnitIds(db: DbOrTx, investigationId: string): Promise<string[]> {
  const rows = await db
    .select({ unitId: investigationUnits.unitId })
    .from(investigationUnits)
    .where(eq(investigationUnits.investigationId, investigationId))
    .orderBy(asc(investigationUnits.addedAt));
  return rows.map((r) => r.unitId);
}

export async function insertComment(tx: DbOrTx, values: typeof investigationComments.$inferInsert) {
  const [row] = await tx.insert(investigationComments).values(values).returning();
  return row;
}

export async function commentsOf(db: DbOrTx, investigationId: string) {
  return db
    .select()
    .from(investigationComments)
    .where(eq(investigationComments.investigationId, investigationId))
    .orderBy(asc(investigationComments.createdAt));
}

export async function listSavedSearchRows(db: DbOrTx): Promise<SavedSearchRecord[]> {
  return db
    .select()
    .from(savedSearches)
    .orderBy(asc(sql`lower(${savedSearches.name})`))
    .limit(500);
}

export async function findSavedSearch(db: DbOrTx, id: string): Promise<SavedSearchRecord | undefined> {
  const [row] = await db.select().from(savedSearches).where(eq(savedSearches.id, id));
  return row;
}

/** Inserts a saved search; undefined when its name (case-insensitive) is taken. */
export async function insertSavedSearch(
  tx: DbOrTx,
  values: typeof savedSearches.$inferInsert,
): Promise<SavedSearchRecord | undefined> {
  const [row] = await tx.insert(savedSearches).values(values).onConflictDoNothing().returning();
  return row;
}

export async function deleteSavedSearchRow(tx: DbOrTx, id: string): Promise<SavedSearchRecord | undefined> {
  const [row] = await tx.delete(savedSearches).where(eq(savedSearches.id, id)).returning();
  return row;
}
