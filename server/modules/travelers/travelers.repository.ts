import { and, eq } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { travelers } from './travelers.table';

/** A unit's traveler documents (without their PDF bytes), oldest first. */
export async function listTravelerDocsOfUnit(db: DbOrTx, unitId: string) {
  return db
    .select({
      id: travelers.id,
      printNumber: travelers.printNumber,
      pageSize: travelers.pageSize,
      sha256: travelers.sha256,
      createdAt: travelers.createdAt,
    })
    .from(travelers)
    .where(eq(travelers.unitId, unitId))
    .orderBy(travelers.createdAt);
}

/** One traveler document of a unit (undefined when the id is not one of this unit's). */
export async function travelerDocOfUnit(db: DbOrTx, unitId: string, id: string) {
  const [doc] = await db
    .select()
    .from(travelers)
    .where(and(eq(travelers.id, id), eq(travelers.unitId, unitId)));
  return doc;
}
