import { eq, inArray } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { investigationReference } from '#shared/schemas/quality';
import { investigations, investigationUnits } from './quality.table';

/** "INV-0007 · Motor stalls at start" for each case id, for lists that name cases (the audit trail). */
export async function investigationLabelsByIds(db: DbOrTx, ids: string[]): Promise<Map<string, string>> {
  if (ids.length === 0) return new Map();
  const rows = await db
    .select({ id: investigations.id, number: investigations.number, title: investigations.title })
    .from(investigations)
    .where(inArray(investigations.id, ids));
  return new Map(rows.map((r) => [r.id, `${investigationReference(r.number)} · ${r.title}`]));
}

/** The cases a unit is linked to (by a hold under the case or by linking it from a search). */
export async function investigationIdsOfUnit(db: DbOrTx, unitId: string): Promise<string[]> {
  const rows = await db
    .select({ id: investigationUnits.investigationId })
    .from(investigationUnits)
    .where(eq(investigationUnits.unitId, unitId));
  return rows.map((r) => r.id);
}
