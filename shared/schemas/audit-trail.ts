import { z } from 'zod';
import { serialSchema } from './serial';

const opt = <T extends z.ZodType>(schema: T) =>
  z.preprocess((v) => (v === '' || v === null ? undefined : v), schema.optional());

/** The subjects quality reads in the audit trail; accounts and sign-ins stay with administrators. */
export const QUALITY_AUDIT_SUBJECTS = [
  'unit',
  'investigation',
  'calibration',
  'measurement',
  'recipe',
] as const;

export const auditTrailQuerySchema = z.object({
  serial: opt(serialSchema),
  /** Part of the acting person's name. */
  person: opt(z.string().trim().min(1).max(100)),
  /** An action or the start of one, e.g. "units.held" or "units". */
  action: opt(z.string().trim().min(1).max(80)),
  from: opt(z.iso.datetime({ offset: true, message: 'Give the date and time the range starts' })),
  to: opt(z.iso.datetime({ offset: true, message: 'Give the date and time the range ends' })),
  limit: z.coerce.number().int().min(1).max(5000).default(500),
});
export type AuditTrailQuery = z.infer<typeof auditTrailQuerySchema>;
