import { z } from 'zod';

/** Values of pgEnum `watched_chart_kind`: the individuals chart and the EWMA. */
export const WATCHED_CHART_KINDS = ['imr', 'ewma'] as const;
/** Values of pgEnum `chart_alert_status`. */
export const CHART_ALERT_STATUSES = ['open', 'acknowledged'] as const;

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
  chart: z.enum(WATCHED_CHART_KINDS),
  chartLabel: z.string(),
  stationId: z.string(),
  station: z.string(),
  modelId: z.string(),
  model: z.string(),
  rule: z.number().int(),
  ruleText: z.string(),
  status: z.enum(CHART_ALERT_STATUSES),
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
  status: z.enum([...CHART_ALERT_STATUSES, 'all']).default('open'),
  stationId: z.uuid().optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
});

export const acknowledgeAlertSchema = z.object({
  comment: z.string().trim().min(3, 'Say what was found or done (at least 3 characters)').max(1000),
});

export const alertSubscriptionSchema = z.object({ subscribed: z.boolean() });
