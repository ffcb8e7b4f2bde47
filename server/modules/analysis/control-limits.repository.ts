import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { controlLimitSets, type ControlLimitSetRecord } from './analysis.table';

/** The scope key of a station's limits, or of the model's limits across stations. */
export const scopeKey = (stationId: string | null) => stationId ?? 'model';

export interface LimitScope {
  modelId: string;
  stationId: string | null;
  figure: string;
}

/** Every version of exactly this scope, newest first. */
export async function limitVersions(db: DbOrTx, s: LimitScope): Promise<ControlLimitSetRecord[]> {
  return db
    .select()
    .from(controlLimitSets)
    .where(
      and(
        eq(controlLimitSets.modelId, s.modelId),
        eq(controlLimitSets.scope, scopeKey(s.stationId)),
        eq(controlLimitSets.figure, s.figure),
      ),
    )
    .orderBy(desc(controlLimitSets.version));
}

/** The newest version of a scope (null when none was ever saved). */
export async function newestLimitVersion(db: DbOrTx, s: LimitScope): Promise<ControlLimitSetRecord | null> {
  const [row] = await db
    .select()
    .from(controlLimitSets)
    .where(
      and(
        eq(controlLimitSets.modelId, s.modelId),
        eq(controlLimitSets.scope, scopeKey(s.stationId)),
        eq(controlLimitSets.figure, s.figure),
      ),
    )
    .orderBy(desc(controlLimitSets.version))
    .limit(1);
  return row ?? null;
}

/**
 * The station's newest version if it has any, else the model's newest (null when neither was ever saved),
 * in one query: the station's own scope sorts first.
 */
export async function newestStationOrModelVersion(
  db: DbOrTx,
  s: LimitScope,
): Promise<ControlLimitSetRecord | null> {
  const scopes = s.stationId ? [scopeKey(s.stationId), scopeKey(null)] : [scopeKey(null)];
  const [row] = await db
    .select()
    .from(controlLimitSets)
    .where(
      and(
        eq(controlLimitSets.modelId, s.modelId),
        inArray(controlLimitSets.scope, scopes),
        eq(controlLimitSets.figure, s.figure),
      ),
    )
    .orderBy(sql`${controlLimitSets.scope} = ${scopeKey(null)}`, desc(controlLimitSets.version))
    .limit(1);
  return row ?? null;
}

/**
 * Appends the next version of a scope. Versions of one scope are serialised by an advisory lock (the table is
 * append-only, so no row lock); the unique index stays the last guard.
 */
export async function appendLimitVersion(
  tx: DbOrTx,
  row: Omit<typeof controlLimitSets.$inferInsert, 'version' | 'scope' | 'id'>,
): Promise<ControlLimitSetRecord> {
  const scope = scopeKey(row.stationId ?? null);
  await tx.execute(
    sql`select pg_advisory_xact_lock(hashtextextended(${`limits:${row.modelId}:${scope}:${row.figure}`}, 0))`,
  );
  const newest = await newestLimitVersion(tx, {
    modelId: row.modelId,
    stationId: row.stationId ?? null,
    figure: row.figure,
  });
  const [created] = await tx
    .insert(controlLimitSets)
    .values({ ...row, scope, version: (newest?.version ?? 0) + 1 })
    .returning();
  return created;
}
