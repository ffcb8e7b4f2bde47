import { z } from 'zod';

/** Alerts raised by the watched control charts (one station × one model each). */
export const alertPointSchema = z.object({
  serial: z.string(),
  unitId: z.string(),
  calibrationId: z.string(),
  value: z.number(),
  at: z.string(),
});

export const alertViewSchema = z.object({
  id: z.string(),
  chart: z.enum(['imr', 'ewma', 'qualification']),
  chartLabel: z.string(),
  stationId: z.string(),
  station: z.string(),
  modelId: z.string(),
  model: z.string(),
  rule: z.number().int(),
  ruleText: z.string(),
  status: z.enum(['open', 'acknowledged']),
  hits: z.number().int(),
  /** Units involved (offsets in electrical degrees), oldest first. */
  points: z.array(alertPointSchema),
  raisedAt: z.string(),
  lastHitAt: z.string(),
  acknowledgedBy: z.string().nullable(),
  acknowledgedAt: z.string().nullable(),
  comment: z.string().nullable(),
});
export type AlertView = z.infer<typeof alertViewSchema>;

export const alertListQuerySchema = z.object({
  status: z.enum(['open', 'acknowledged', 'all']).default('open'),
  stationId: z.uuid().optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
});

export const acknowledgeAlertSchema = z.object({
  comment: z.string().trim().min(3, 'Say what was found or done (at least 3 characters)').max(1000),
});

export const alertSubscriptionSchema = z.object({ subscribed: z.boolean() });
