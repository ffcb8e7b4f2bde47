import { desc } from 'drizzle-orm';
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
