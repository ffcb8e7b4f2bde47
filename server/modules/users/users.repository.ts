import { asc, eq, inArray, sql } from 'drizzle-orm';
import type { PgUpdateSetSource } from 'drizzle-orm/pg-core';
import type { DbOrTx } from '#server/db/client';
import { normaliseBadgeCode } from '#shared/schemas/auth';
import { users, type UserRecord } from './users.table';

export async function findUserById(db: DbOrTx, id: string): Promise<UserRecord | undefined> {
  const [row] = await db.select().from(users).where(eq(users.id, id));
  return row;
}

export async function findUserByUsername(db: DbOrTx, username: string): Promise<UserRecord | undefined> {
  const [row] = await db.select().from(users).where(eq(users.username, username.trim().toLowerCase()));
  return row;
}

export async function findUserByEmail(db: DbOrTx, email: string): Promise<UserRecord | undefined> {
  const [row] = await db
    .select()
    .from(users)
    .where(sql`lower(${users.email}) = ${email.trim().toLowerCase()}`);
  return row;
}

export async function findUserByBadge(db: DbOrTx, badgeCode: string): Promise<UserRecord | undefined> {
  const [row] = await db
    .select()
    .from(users)
    .where(sql`upper(${users.badgeCode}) = ${normaliseBadgeCode(badgeCode)}`);
  return row;
}

export async function listUsers(db: DbOrTx): Promise<UserRecord[]> {
  return db.select().from(users).orderBy(asc(users.username));
}

export async function insertUser(db: DbOrTx, values: typeof users.$inferInsert): Promise<UserRecord> {
  const [row] = await db.insert(users).values(values).returning();
  return row;
}

export async function updateUser(
  db: DbOrTx,
  id: string,
  values: PgUpdateSetSource<typeof users>,
): Promise<UserRecord | undefined> {
  const [row] = await db
    .update(users)
    .set({ ...values, updatedAt: sql`now()` })
    .where(eq(users.id, id))
    .returning();
  return row;
}

/**
 * Counts one sign-in attempt against an account before its secret is checked, in one statement (the
 * row lock orders parallel attempts, so each sees its own number). Returns the attempt's number among
 * consecutive failures, or null when the account is locked (nothing is counted then).
 *
 * - A lock that has expired is cleared and the count starts again at 1: one wrong try after a lock
 *   does not lock again.
 * - The attempt that reaches `threshold` sets the lock at once (until `lockUntil`), so no later
 *   parallel attempt is checked; if that attempt turns out right, the sign-in clears the lock.
 */
export async function reserveSignInAttempt(
  db: DbOrTx,
  id: string,
  now: Date,
  threshold: number,
  lockUntil: Date,
): Promise<{ attempt: number; locks: boolean } | null> {
  const at = sql`${now.toISOString()}::timestamptz`;
  const expired = sql`(${users.lockedUntil} is not null and ${users.lockedUntil} <= ${at})`;
  const next = sql`(case when ${expired} then 1 else ${users.failedAttempts} + 1 end)`;
  const [row] = await db
    .update(users)
    .set({
      failedAttempts: next,
      lockedUntil: sql`case when ${next} >= ${threshold} then ${lockUntil.toISOString()}::timestamptz
                            when ${expired} then null else ${users.lockedUntil} end`,
    })
    .where(sql`${users.id} = ${id} and (${users.lockedUntil} is null or ${users.lockedUntil} <= ${at})`)
    .returning({ failedAttempts: users.failedAttempts, lockedUntil: users.lockedUntil });
  if (!row) return null;
  return { attempt: row.failedAttempts, locks: row.lockedUntil !== null };
}

/** Display names of the given accounts, by id (for logs that keep only an id). */
export async function displayNamesByIds(db: DbOrTx, ids: string[]): Promise<Map<string, string>> {
  if (ids.length === 0) return new Map();
  const rows = await db
    .select({ id: users.id, name: users.displayName })
    .from(users)
    .where(inArray(users.id, ids));
  return new Map(rows.map((r) => [r.id, r.name]));
}

/** The update value that moves an account's token version on (ends all of its sessions). */
export const nextTokenVersion = () => sql<number>`${users.tokenVersion} + 1`;

export async function countUsers(db: DbOrTx): Promise<number> {
  const [{ n }] = await db.select({ n: sql<number>`count(*)::int` }).from(users);
  return n;
}

export async function insertUsers(db: DbOrTx, values: (typeof users.$inferInsert)[]): Promise<UserRecord[]> {
  return db.insert(users).values(values).returning();
}
