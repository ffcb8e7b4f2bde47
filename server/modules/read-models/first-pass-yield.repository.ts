import { and, eq, sql } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { calibrations } from '../calibrations/calibrations.table';
import { units } from '../units/units.table';

/**
 * First-pass yield per model since `since`: of the units whose first station measurement (attempt 1)
 * was computed since then, how many passed it. Model id → counts.
 */
export async function firstPassYieldByModel(
  db: DbOrTx,
  since: Date,
): Promise<Map<string, { firstMeasured: number; passedFirst: number }>> {
  const rows = await db
    .select({
      modelId: units.modelId,
      firstMeasured: sql<number>`count(*)::int`,
      passedFirst: sql<number>`count(*) filter (where ${calibrations.verdict} = 'pass')::int`,
    })
    .from(calibrations)
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .where(
      and(
        eq(calibrations.purpose, 'station'),
        eq(calibrations.attempt, 1),
        sql`${calibrations.computedAt} >= ${since.toISOString()}`,
      ),
    )
    .groupBy(units.modelId);
  return new Map(
    rows.map((r) => [r.modelId, { firstMeasured: r.firstMeasured, passedFirst: r.passedFirst }]),
  );
}
