import { and, count, desc, eq, gte, ilike, inArray, like, lte, or, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '../../db/client';
import { auditLog } from './audit.table';

export interface AuditInput {
  actorId?: string | null;
  actorName?: string | null;
  action: string;
  subjectType?: string | null;
  subjectId?: string | null;
  reason?: string | null;
  before?: unknown;
  after?: unknown;
  ip?: string | null;
}

export async function insertAudit(db: DbOrTx, entry: AuditInput): Promise<void> {
  await db.insert(auditLog).values({
    actorId: entry.actorId ?? null,
    actorName: entry.actorName ?? null,
    action: entry.action,
    subjectType: entry.subjectType ?? null,
    subjectId: entry.subjectId ?? null,
    reason: entry.reason ?? null,
    before: entry.before ?? null,
    after: entry.after ?? null,
    ip: entry.ip ?? null,
  });
}

export async function listAudit(db: DbOrTx, limit: number) {
  return db.select().from(auditLog).orderBy(desc(auditLog.id)).limit(limit);
}

/** Inserts many audit entries (one statement per 1,000), e.g. one per unit of a bulk hold. */
export async function insertAuditMany(db: DbOrTx, entries: AuditInput[]): Promise<void> {
  for (let i = 0; i < entries.length; i += 1000) {
    await db.insert(auditLog).values(
      entries.slice(i, i + 1000).map((entry) => ({
        actorId: entry.actorId ?? null,
        actorName: entry.actorName ?? null,
        action: entry.action,
        subjectType: entry.subjectType ?? null,
        subjectId: entry.subjectId ?? null,
        reason: entry.reason ?? null,
        before: entry.before ?? null,
        after: entry.after ?? null,
        ip: entry.ip ?? null,
      })),
    );
  }
}

/** Audit entries about the given subject types, filtered, newest first. */
export async function listAuditFiltered(
  db: DbOrTx,
  f: {
    subjectTypes: readonly string[];
    subjectId?: string;
    person?: string;
    action?: string;
    from?: string;
    to?: string;
    limit: number;
  },
) {
  const conds: (SQL | undefined)[] = [
    inArray(auditLog.subjectType, [...f.subjectTypes]),
    f.subjectId ? eq(auditLog.subjectId, f.subjectId) : undefined,
    f.person ? ilike(auditLog.actorName, `%${f.person.replace(/[\\%_]/g, (c) => `\\${c}`)}%`) : undefined,
    f.action
      ? or(
          eq(auditLog.action, f.action),
          like(auditLog.action, `${f.action.replace(/[\\%_]/g, (c) => `\\${c}`)}.%`),
        )
      : undefined,
    f.from ? gte(auditLog.at, new Date(f.from)) : undefined,
    f.to ? lte(auditLog.at, new Date(f.to)) : undefined,
  ];
  return db
    .select()
    .from(auditLog)
    .where(and(...conds.filter((c): c is SQL => c !== undefined)))
    .orderBy(desc(auditLog.id))
    .limit(f.limit);
}

/** How many entries name this subject with one of these actions (a traveler's print number counts them). */
export async function countAuditOf(
  db: DbOrTx,
  q: { subjectType: string; subjectId: string; actions: string[] },
): Promise<number> {
  const [{ n }] = await db
    .select({ n: count() })
    .from(auditLog)
    .where(
      and(
        eq(auditLog.subjectType, q.subjectType),
        eq(auditLog.subjectId, q.subjectId),
        inArray(auditLog.action, q.actions),
      ),
    );
  return n;
}
