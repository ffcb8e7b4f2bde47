import { z } from 'zod';

/** Values of pgEnum `watched_chart_kind`: the individuals chart and the EWMA. */
/** 'qualification': a station's reference-unit readings (alerts raised by the qualification module, not watched). */
export const WATCHED_CHART_KINDS = ['imr', 'ewma', 'qualification', 'xbar-r'] as const;
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

export const watchedChartKindSchema = z.enum(['imr', 'ewma', 'xbar-r']);
export const RULE_SET_SIZE = { 'western-electric': 4, nelson: 8 } as const;

/** An engineer's choice for one chart of a station × model (a kind the pair lacks is added). */
export const watchedChartSettingsSchema = z
  .object({
    stationId: z.uuid('Choose a station'),
    modelId: z.uuid('Choose a model'),
    kind: watchedChartKindSchema,
    watched: z.boolean(),
    ruleSet: z.enum(['western-electric', 'nelson']).default('western-electric'),
    /** Rules judged (individuals and X̄-R); every rule of the set when left out. */
    rules: z.array(z.number().int().min(1).max(8)).min(1).max(8).optional(),
    /** EWMA weight λ and limit width L (in σ of the EWMA). */
    lambda: z.number().gt(0).max(1).default(0.2),
    limitWidth: z.number().gt(0).max(6).default(3),
    /** X̄-R: consecutive units per subgroup. */
    subgroupSize: z.number().int().min(2).max(25).default(5),
  })
  .refine((s) => !s.rules || s.rules.every((r) => r <= RULE_SET_SIZE[s.ruleSet]), {
    message: 'Western Electric has rules 1 to 4; Nelson has rules 1 to 8',
    path: ['rules'],
  });
export type WatchedChartSettings = z.infer<typeof watchedChartSettingsSchema>;

export const watchedChartListQuerySchema = z.object({
  modelId: z.uuid().optional(),
  stationId: z.uuid().optional(),
});

export const watchedChartViewSchema = z.object({
  id: z.string(),
  stationId: z.string(),
  station: z.string(),
  modelId: z.string(),
  model: z.string(),
  kind: watchedChartKindSchema,
  label: z.string(),
  watched: z.boolean(),
  ruleSet: z.enum(['western-electric', 'nelson']),
  rules: z.array(z.number().int()),
  lambda: z.number().nullable(),
  limitWidth: z.number().nullable(),
  subgroupSize: z.number().int().nullable(),
  /** Who chose these settings and when (null: the product's default). */
  changedBy: z.string().nullable(),
  changedAt: z.string().nullable(),
  /** `frozen`: an engineer's saved limits are in force; `own`: fixed from the chart's first points; `pending`: still collecting them. */
  limits: z.enum(['frozen', 'own', 'pending']),
  /** Points judged against the current limits. */
  judged: z.number().int(),
});
export type WatchedChartView = z.infer<typeof watchedChartViewSchema>;
