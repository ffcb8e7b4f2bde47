import { z } from 'zod';

/** The audit log as administrators read it. */
export const auditEntrySchema = z.object({
  id: z.number().int(),
  at: z.string(),
  actorId: z.string().nullable(),
  actorName: z.string().nullable(),
  action: z.string(),
  subjectType: z.string().nullable(),
  subjectId: z.string().nullable(),
  /** The subject in words for people (a person's name, a serial, a station's name), when known. */
  subjectLabel: z.string().nullable(),
  reason: z.string().nullable(),
  before: z.unknown().nullable(),
  after: z.unknown().nullable(),
  ip: z.string().nullable(),
});
export type AuditEntry = z.infer<typeof auditEntrySchema>;
export const auditResponseSchema = z.object({ entries: z.array(auditEntrySchema) });
