import { asc, eq, inArray, sql } from 'drizzle-orm';
import type { PgUpdateSetSource } from 'drizzle-orm/pg-core';
import type { DbOrTx } from '../../db/client';
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
    .where(sql`upper(${users.badgeCode}) = ${badgeCode.trim().toUpperCase()}`);
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

/** Adds one to the consecutive-failure counter atomically and returns the new count. */
export async function incrementFailedAttempts(db: DbOrTx, id: string): Promise<number> {
  const [row] = await db
    .update(users)
    .set({ failedAttempts: sql`${users.failedAttempts} + 1` })
    .where(eq(users.id, id))
    .returning({ failedAttempts: users.failedAttempts });
  return row?.failedAttempts ?? 0;
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
