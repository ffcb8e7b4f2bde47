import { and, asc, desc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { DbOrTx } from '../../db/client';
import {
  investigationComments,
  investigations,
  investigationUnits,
  unitHolds,
  type InvestigationRecord,
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
  for (let i = 0; i < unitIds.length; i += 5000) {
    await tx
      .insert(investigationUnits)
      .values(unitIds.slice(i, i + 5000).map((unitId) => ({ investigationId, unitId, addedBy: by })))
      .onConflictDoNothing();
  }
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
