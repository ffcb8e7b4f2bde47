import { asc, eq } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { investigations, investigationUnits, unitHolds } from './quality.table';

/** Every hold of a unit with its release, oldest first, and the investigation it was placed under. */
export async function holdsOfUnit(db: DbOrTx, unitId: string) {
  return db
    .select({ hold: unitHolds, investigationNumber: investigations.number })
    .from(unitHolds)
    .leftJoin(investigations, eq(investigations.id, unitHolds.investigationId))
    .where(eq(unitHolds.unitId, unitId))
    .orderBy(asc(unitHolds.heldAt));
}

/** The investigations that link a unit, in the order it was linked, with who linked it. */
export async function investigationsOfUnit(db: DbOrTx, unitId: string) {
  return db
    .select({
      id: investigations.id,
      number: investigations.number,
      title: investigations.title,
      status: investigations.status,
      addedAt: investigationUnits.addedAt,
      addedBy: investigationUnits.addedBy,
    })
    .from(investigationUnits)
    .innerJoin(investigations, eq(investigations.id, investigationUnits.investigationId))
    .where(eq(investigationUnits.unitId, unitId))
    .orderBy(asc(investigationUnits.addedAt));
}
