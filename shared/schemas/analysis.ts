import { z } from 'zod';
import { TIME_PRESETS } from '../time/plant-time';
import { calibrationPurposeSchema } from './calibrations';

/**
 * The process engineer's line statistics: one filter for every view, carried in the URL query string
 * (lists comma-separated), and the answers of each view. Angles are electrical degrees.
 */

/** A comma-separated query value or a repeated one, as a list; empty means "no restriction". */
const list = <T extends z.ZodType>(item: T) =>
  z.preprocess((v) => {
    if (v === undefined || v === null || v === '') return undefined;
    const parts = (Array.isArray(v) ? v : [v]).flatMap((x) => String(x).split(','));
    const clean = parts.map((p) => p.trim()).filter((p) => p.length > 0);
    return clean.length ? clean : undefined;
  }, z.array(item).max(200).optional());

/** The per-unit figures a view can show, with their unit of measure. */
export const ANALYSIS_FIGURES = {
  offsetDeg: { label: 'Offset', unit: '°' },
  lagDeg: { label: 'Lag (forward − reverse) / 2', unit: '°' },
  placementADeg: { label: 'Placement residual, sensor A', unit: '°' },
  placementBDeg: { label: 'Placement residual, sensor B', unit: '°' },
  placementCDeg: { label: 'Placement residual, sensor C', unit: '°' },
  speedRpm: { label: 'Speed', unit: 'rpm' },
  fitResidualDeg: { label: 'Fit residual of the crossings', unit: '°' },
  keVPerKrpm: { label: 'Back-EMF constant (captures)', unit: 'V/krpm' },
} as const;
export const figureSchema = z.enum(Object.keys(ANALYSIS_FIGURES) as [keyof typeof ANALYSIS_FIGURES]);
export type AnalysisFigure = z.infer<typeof figureSchema>;

export const analysisFilterSchema = z
  .object({
    model: z.uuid('Choose a model'),
    stations: list(z.uuid()),
    hallBoardLots: list(z.string().max(64)),
    magnetRingLots: list(z.string().max(64)),
    statorLots: list(z.string().max(64)),
    recipeVersions: list(z.coerce.number().int().positive()),
    operators: list(z.uuid()),
    from: z.iso.datetime({ offset: true }).optional(),
    to: z.iso.datetime({ offset: true }).optional(),
    /**
     * A time preset in the plant's time zone, resolved by the server when the view is read (so "this shift"
     * moves with the clock): it replaces `from`/`to`. `custom` and `all` leave them as given.
     */
    range: z.enum(TIME_PRESETS).optional(),
    verdict: z.enum(['pass', 'fail', 'all']).default('all'),
    /** Only each unit's first counted attempt, or every attempt. */
    attempts: z.enum(['first', 'all']).default('all'),
    /** The results stations got, or engineers' recomputations. */
    purpose: calibrationPurposeSchema.default('station'),
    figure: figureSchema.default('offsetDeg'),
  })
  .refine((f) => !f.from || !f.to || f.from < f.to, {
    message: 'The start of the time range must come before its end',
    path: ['to'],
  });
export type AnalysisFilter = z.infer<typeof analysisFilterSchema>;

export const chartKindSchema = z.enum(['imr', 'xbar-r', 'xbar-s', 'ewma']);
export type ChartKind = z.infer<typeof chartKindSchema>;

export const controlChartQuerySchema = z.intersection(
  analysisFilterSchema,
  z
    .object({
      chart: chartKindSchema.default('imr'),
      /** Units per subgroup (X̄-R and X̄-S): consecutive ones, or at most this many from each hour or shift. */
      subgroupSize: z.coerce.number().int().min(2).max(25).default(5),
      /** `count`: consecutive units; `hour` / `shift`: the first units of each hour or plant shift (local time). */
      subgroupBy: z.enum(['count', 'hour', 'shift']).default('count'),
      lambda: z.coerce.number().gt(0).max(1).default(0.2),
      L: z.coerce.number().gt(0).max(6).default(3),
      ruleSet: z.enum(['western-electric', 'nelson']).default('western-electric'),
      rules: list(z.coerce.number().int().min(1).max(8)),
      /** Newest points shown (the chart ends at the newest unit). */
      limit: z.coerce.number().int().min(10).max(20_000).default(10_000),
      /** Optional baseline window: limits are computed from it and held for every point shown. */
      baselineFrom: z.iso.datetime({ offset: true }).optional(),
      baselineTo: z.iso.datetime({ offset: true }).optional(),
      /** `saved`: the frozen limits in force for this scope when there are any; `shown`: from the points shown. */
      limits: z.enum(['saved', 'shown']).default('saved'),
    })
    .refine((q) => !q.baselineFrom === !q.baselineTo, {
      message: 'A baseline window needs both a start and an end',
      path: ['baselineTo'],
    }),
);
export type ControlChartQuery = z.infer<typeof controlChartQuerySchema>;

export const COMPARE_BY = {
  station: 'Station',
  hallBoardLot: 'Hall-board lot',
  magnetRingLot: 'Magnet-ring lot',
  statorLot: 'Stator lot',
  operator: 'Operator',
  recipeVersion: 'Recipe version',
} as const;
export const compareBySchema = z.enum(Object.keys(COMPARE_BY) as [keyof typeof COMPARE_BY]);
export type CompareBy = z.infer<typeof compareBySchema>;

export const comparisonQuerySchema = z.intersection(
  analysisFilterSchema,
  z.object({
    by: compareBySchema.default('station'),
    /** Practical difference worth acting on, in the figure's unit. */
    threshold: z.coerce.number().min(0).max(1000).default(1),
  }),
);
export type ComparisonQuery = z.infer<typeof comparisonQuerySchema>;

const intervalSchema = z.object({ value: z.number(), lower: z.number(), upper: z.number() });

export const distributionViewSchema = z.object({
  figure: figureSchema,
  unit: z.string(),
  n: z.number().int(),
  description: z.object({
    n: z.number().int(),
    mean: z.number().nullable(),
    sd: z.number().nullable(),
    median: z.number().nullable(),
    min: z.number().nullable(),
    max: z.number().nullable(),
    skewness: z.number().nullable(),
    q1: z.number().nullable(),
    q3: z.number().nullable(),
  }),
  histogram: z.array(z.object({ from: z.number(), to: z.number(), count: z.number().int() })),
  /** The recipe's limits and their midpoint as target (offset only; null for figures without limits). */
  limits: z.object({ lsl: z.number().nullable(), usl: z.number().nullable(), target: z.number().nullable() }),
  recipeVersion: z.number().int().nullable(),
  normality: z
    .object({
      statistic: z.number(),
      adjusted: z.number(),
      pValue: z.number(),
      normal: z.boolean(),
      /** Values the test saw: every one, or the newest when there are very many. */
      n: z.number().int(),
    })
    .nullable(),
  capability: z
    .object({
      n: z.number().int(),
      mean: z.number(),
      sigmaWithin: z.number(),
      sigmaOverall: z.number(),
      cp: intervalSchema.nullable(),
      cpk: intervalSchema.nullable(),
      cpu: z.number().nullable(),
      cpl: z.number().nullable(),
      pp: intervalSchema.nullable(),
      ppk: intervalSchema.nullable(),
      ppmWithin: z.number(),
      ppmOverall: z.number(),
      reading: z.enum(['capable', 'conditionally-capable', 'not-capable']).nullable(),
    })
    .nullable(),
  /** Plain warnings for the person reading the figures. */
  warnings: z.array(z.string()),
});
export type DistributionView = z.infer<typeof distributionViewSchema>;

export const chartPointSchema = z.object({
  /** Serial of the unit (the last unit of a subgroup for X̄ charts). */
  serial: z.string(),
  unitIds: z.array(z.string()),
  computedAt: z.string(),
  /** The hour or shift of a subgroup taken by time (plant time), e.g. "2026-11-05 Early". */
  period: z.string().optional(),
  value: z.number(),
  rules: z.array(z.number().int()),
});

const chartLineSchema = z.object({
  title: z.string(),
  points: z.array(chartPointSchema),
  center: z.array(z.number()),
  ucl: z.array(z.number()),
  lcl: z.array(z.number()),
});

export const controlChartViewSchema = z.object({
  chart: chartKindSchema,
  figure: figureSchema,
  unit: z.string(),
  ruleSet: z.enum(['western-electric', 'nelson']),
  rules: z.array(z.number().int()),
  baseline: z.object({
    center: z.number(),
    sigma: z.number(),
    /** `shown`: from the points shown; `window`: a baseline window tried out; `saved`: frozen limits in force. */
    source: z.enum(['shown', 'window', 'saved']),
    from: z.string().nullable(),
    to: z.string().nullable(),
    /** The saved limits used (who set them, when, version), when `source` is `saved`. */
    saved: z.lazy(() => limitSetViewSchema).nullable(),
  }),
  location: chartLineSchema,
  spread: chartLineSchema.nullable(),
  violations: z.array(
    z.object({
      rule: z.number().int(),
      text: z.string(),
      at: chartPointSchema,
      serials: z.array(z.string()),
    }),
  ),
  /** Units left out because there were more than `limit` points. */
  omitted: z.number().int(),
});
export type ControlChartView = z.infer<typeof controlChartViewSchema>;

export const comparisonViewSchema = z.object({
  by: compareBySchema,
  figure: figureSchema,
  unit: z.string(),
  threshold: z.number(),
  groups: z.array(
    z.object({
      key: z.string(),
      label: z.string(),
      n: z.number().int(),
      mean: z.number(),
      sd: z.number().nullable(),
      ciLow: z.number().nullable(),
      ciHigh: z.number().nullable(),
      box: z.object({
        q1: z.number(),
        median: z.number(),
        q3: z.number(),
        whiskerLow: z.number(),
        whiskerHigh: z.number(),
        outliers: z.array(z.number()),
      }),
    }),
  ),
  test: z
    .object({
      test: z.enum(['welch-anova', 'kruskal-wallis']),
      statistic: z.number(),
      df1: z.number(),
      df2: z.number().nullable(),
      pValue: z.number(),
      reason: z.string(),
    })
    .nullable(),
  standOut: z.array(z.object({ key: z.string(), label: z.string(), differenceFromRest: z.number() })),
});
export type ComparisonView = z.infer<typeof comparisonViewSchema>;

export const lineHealthViewSchema = z.object({
  days: z.array(
    z.object({
      day: z.string(),
      stationId: z.string(),
      station: z.string(),
      units: z.number().int(),
      firstPassYieldPct: z.number().nullable(),
      retestRatePct: z.number().nullable(),
      programmingMismatches: z.number().int(),
    }),
  ),
  failedChecks: z.array(z.object({ code: z.string(), label: z.string(), count: z.number().int() })),
  placementTrend: z.array(
    z.object({
      day: z.string(),
      aDeg: z.number().nullable(),
      bDeg: z.number().nullable(),
      cDeg: z.number().nullable(),
    }),
  ),
});
export type LineHealthView = z.infer<typeof lineHealthViewSchema>;

export const analysisOptionsSchema = z.object({
  /** The plant's time zone (IANA name) and shifts, for time presets and subgroups by shift. */
  timeZone: z.string(),
  shifts: z.array(z.object({ name: z.string(), startsAt: z.string() })),
  stations: z.array(z.object({ id: z.string(), name: z.string() })),
  hallBoardLots: z.array(z.string()),
  magnetRingLots: z.array(z.string()),
  statorLots: z.array(z.string()),
  operators: z.array(z.object({ id: z.string(), name: z.string() })),
  recipeVersions: z.array(z.number().int()),
});
export type AnalysisOptions = z.infer<typeof analysisOptionsSchema>;

/** Plain names of the calibration checks, for the Pareto of failures. */
export const CHECK_NAMES: Record<string, string> = {
  'offset.within_limits': 'Offset outside the recipe window',
  'edges.residual_spread': 'Edge residuals too spread',
  'bemf.phase_sequence': 'Phases in the wrong order',
  'hall.all_switching': 'A hall sensor never switched',
  'hall.valid_states': 'Invalid hall states seen',
  'direction.as_declared': 'Turned the other way than declared',
  'speed.within_window': 'Speed outside the window',
  'turns.enough': 'Too few turns measured',
  'fit.residual': 'Back-EMF crossings fit poorly',
  'speed.variation': 'Speed varied too much',
  'capture.ke_within_limits': 'Back-EMF constant outside limits',
};

/** The scope of frozen limits: a model's figure at one station, or across the model's stations. */
export const limitScopeQuerySchema = z.object({
  model: z.uuid('Choose a model'),
  station: z.uuid().optional(),
  figure: figureSchema.default('offsetDeg'),
});
export type LimitScopeQuery = z.infer<typeof limitScopeQuerySchema>;

const reasonSchema = z.string().trim().min(3, 'Say why (at least 3 characters)').max(500);

/**
 * Freeze limits from a baseline window: the filter (one station or none) selects the values, the window
 * bounds them in time, and the chart kind says how σ within is estimated.
 */
export const freezeLimitsSchema = z.intersection(
  analysisFilterSchema,
  z
    .object({
      chart: z.enum(['imr', 'xbar-r', 'xbar-s']).default('imr'),
      subgroupSize: z.coerce.number().int().min(2).max(25).default(5),
      baselineFrom: z.iso.datetime({ offset: true }),
      baselineTo: z.iso.datetime({ offset: true }),
      reason: reasonSchema,
    })
    .refine((q) => q.baselineFrom < q.baselineTo, {
      message: 'The start of the baseline window must come before its end',
      path: ['baselineTo'],
    }),
);
export type FreezeLimitsInput = z.infer<typeof freezeLimitsSchema>;

export const clearLimitsSchema = z.object({
  model: z.uuid('Choose a model'),
  station: z.uuid().optional(),
  figure: figureSchema.default('offsetDeg'),
  reason: reasonSchema,
});
export type ClearLimitsInput = z.infer<typeof clearLimitsSchema>;

export const limitSetViewSchema = z.object({
  id: z.string(),
  version: z.number().int(),
  /** `station`: limits of one station; `model`: of the model across its stations. */
  scope: z.enum(['station', 'model']),
  stationId: z.string().nullable(),
  figure: figureSchema,
  /** A clearing version: charts compute their limits from the data shown again. */
  cleared: z.boolean(),
  center: z.number().nullable(),
  sigma: z.number().nullable(),
  basis: z.enum(['imr', 'xbar-r', 'xbar-s']).nullable(),
  subgroupSize: z.number().int().nullable(),
  baselineFrom: z.string().nullable(),
  baselineTo: z.string().nullable(),
  points: z.number().int().nullable(),
  reason: z.string(),
  setBy: z.string(),
  setAt: z.string(),
});
export type LimitSetView = z.infer<typeof limitSetViewSchema>;

export const limitHistorySchema = z.object({
  /** The limits charts of this scope use now (a station's own, else the model's), or null. */
  inForce: limitSetViewSchema.nullable(),
  /** Every version of exactly this scope, newest first. */
  versions: z.array(limitSetViewSchema),
});
export type LimitHistory = z.infer<typeof limitHistorySchema>;
