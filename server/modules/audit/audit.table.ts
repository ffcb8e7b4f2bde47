import { bigint, index, jsonb, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';

/**
 * The audit log: who did what, when and why, with the record before and after.
 * Append-only: a trigger in the migrations refuses UPDATE, DELETE and TRUNCATE.
 * `actorId` is not a foreign key on purpose: the log outlives any row it mentions.
 */
export const auditLog = pgTable(
  'audit_log',
  {
    id: bigint({ mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
    at: timestamp({ withTimezone: true }).notNull().defaultNow(),
    actorId: uuid(),
    actorName: text(),
    action: text().notNull(),
    subjectType: text(),
    subjectId: text(),
    reason: text(),
    before: jsonb(),
    after: jsonb(),
    ip: text(),
  },
  (t) => [index('audit_log_at_idx').on(t.at), index('audit_log_subject_idx').on(t.subjectType, t.subjectId)],
);
