import { and, asc, count, desc, eq, gte, ilike, inArray, like, lte, or, sql, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
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

/**
 * Inserts many audit entries, e.g. one per unit of a bulk hold: the entries travel as one JSON
 * parameter and PostgreSQL expands them (`jsonb_to_recordset`), one statement per 5,000 entries. Bind parameters per row (the earlier form) cost more to send and plan than the rows
 * cost to write.
 */
export async function insertAuditMany(db: DbOrTx, entries: AuditInput[]): Promise<void> {
  for (let i = 0; i < entries.length; i += 5000) {
    const rows = entries.slice(i, i + 5000).map((e) => ({
      actor_id: e.actorId ?? null,
      actor_name: e.actorName ?? null,
      action: e.action,
      subject_type: e.subjectType ?? null,
      subject_id: e.subjectId ?? null,
      reason: e.reason ?? null,
      before: e.before ?? null,
      after: e.after ?? null,
      ip: e.ip ?? null,
    }));
    await db.execute(sql`
      insert into ${auditLog} (actor_id, actor_name, action, subject_type, subject_id, reason, before, after, ip)
      select actor_id, actor_name, action, subject_type, subject_id, reason, before, after, ip
        from jsonb_to_recordset(${JSON.stringify(rows)}::jsonb)
             as x(actor_id uuid, actor_name text, action text, subject_type text, subject_id text, reason text,
                  before jsonb, after jsonb, ip text)`);
  }
}

/** Audit entries about the given subject types, filtered, newest first. */
export async function listAuditFiltered(
  db: DbOrTx,
  f: {
    subjectTypes: readonly string[];
    subjectId?: string;
    /**
     * A unit's trail: its own entries (`subjectId`, subject type unit) and the entries of these cases
     * that name its serial (it was linked or held under them).
     */
    unit?: { id: string; serial: string; caseIds: string[] };
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
    f.unit
      ? or(
          and(eq(auditLog.subjectType, 'unit'), eq(auditLog.subjectId, f.unit.id)),
          f.unit.caseIds.length
            ? and(
                eq(auditLog.subjectType, 'investigation'),
                inArray(auditLog.subjectId, f.unit.caseIds),
                or(
                  sql`${auditLog.after} -> 'serials' ? ${f.unit.serial}`,
                  sql`${auditLog.after} ->> 'serial' = ${f.unit.serial}`,
                ),
              )
            : undefined,
        )
      : undefined,
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

/**
 * Audit entries about any of the given subjects (type and ids), oldest first: what touched one unit is
 * spread over the unit itself, its calibrations and its measurements.
 */
export async function auditOfSubjects(db: DbOrTx, subjects: { type: string; ids: string[] }[], limit = 2000) {
  const conds = subjects
    .filter((s) => s.ids.length > 0)
    .map((s) => and(eq(auditLog.subjectType, s.type), inArray(auditLog.subjectId, s.ids)));
  if (conds.length === 0) return [];
  return db
    .select()
    .from(auditLog)
    .where(or(...conds))
    .orderBy(asc(auditLog.id))
    .limit(limit);
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
