import { z } from 'zod';

/** The system's health: database and job queue. */
export const healthSchema = z.object({
  status: z.enum(['ok', 'degraded']),
  version: z.string(),
  database: z.object({ ok: z.boolean(), latencyMs: z.number().nullable(), error: z.string().optional() }),
  queue: z.object({
    ok: z.boolean(),
    queued: z.number().nullable(),
    active: z.number().nullable(),
    failed: z.number().nullable(),
    error: z.string().optional(),
  }),
});
export type Health = z.infer<typeof healthSchema>;
