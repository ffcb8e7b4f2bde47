import { z } from 'zod';
import { recipeSchema } from './recipe';
import type { RecipeFieldChange } from '../recipe/recipe-fields';

/** Values of pgEnum `what_if_status`. */
export const WHAT_IF_STATUSES = ['queued', 'running', 'done', 'cancelled', 'failed'] as const;

/** HTTP contracts of the recipe desk: models, recipe versions, review and what-if runs. */

const reason = z
  .string()
  .trim()
  .min(3, 'Give a reason of at least 3 characters: it goes into the audit log.')
  .max(1000);

export const modelInputSchema = z.object({
  code: z
    .string()
    .trim()
    .min(1, 'Give the model code.')
    .max(40)
    .regex(/^[A-Za-z0-9][A-Za-z0-9 ._/-]*$/, 'Use letters, digits, spaces, dots, dashes or slashes.'),
  name: z.string().trim().min(1, 'Give the model name.').max(200),
  polePairs: z.number().int().min(1, 'At least 1 pole pair.').max(64, 'At most 64 pole pairs.'),
  reason,
});
export type ModelInput = z.infer<typeof modelInputSchema>;

/** Values of pgEnum `recipe_status`. */
export const RECIPE_STATUSES = ['draft', 'in_review', 'released', 'retired', 'discarded'] as const;
export const recipeStatusSchema = z.enum(RECIPE_STATUSES);
export type RecipeStatus = z.infer<typeof recipeStatusSchema>;

export const RECIPE_STATUS_LABELS: Record<RecipeStatus, string> = {
  draft: 'Draft',
  in_review: 'In review',
  released: 'In force',
  retired: 'Retired',
  discarded: 'Discarded',
};

export const createDraftSchema = z.object({
  /** The version to copy (any status, same model). */
  fromRecipeId: z.string().uuid('Pick the version to copy.'),
  notes: z.string().trim().max(2000).optional(),
});

export const saveDraftSchema = z.object({
  body: recipeSchema,
  notes: z.string().trim().max(2000).nullable().optional(),
  /** The revision the editor started from; a different current revision is a 409. */
  revision: z.number().int().min(1),
});

export const submitDraftSchema = z.object({ reason, revision: z.number().int().min(1) });
/** Discarding a draft: the row stays (audited, with the reason), it leaves the working list. */
export const discardDraftSchema = z.object({ reason, revision: z.number().int().min(1) });
export const approveSchema = z.object({ comment: z.string().trim().max(2000).optional() });
export const sendBackSchema = z.object({
  comment: z.string().trim().min(3, 'Tell the author what to change (at least 3 characters).').max(2000),
});

export const personRefSchema = z.object({ id: z.string(), displayName: z.string() });
export type PersonRef = z.infer<typeof personRefSchema>;

const versionRef = z.object({ id: z.string(), version: z.number().int() });
const recipeLeaf = z.union([z.string(), z.number(), z.boolean(), z.null()]);

/** One field that differs between two recipe versions (see `diffRecipes`). */
export const recipeFieldChangeSchema = z.object({
  path: z.string(),
  label: z.string(),
  unit: z.string(),
  before: recipeLeaf,
  after: recipeLeaf,
}) satisfies z.ZodType<RecipeFieldChange>;

export const recipeVersionViewSchema = z.object({
  id: z.string(),
  modelId: z.string(),
  modelCode: z.string(),
  version: z.number().int(),
  status: recipeStatusSchema,
  body: recipeSchema,
  notes: z.string().nullable(),
  revision: z.number().int(),
  basedOn: versionRef.nullable(),
  createdBy: personRefSchema.nullable(),
  createdAt: z.string(),
  updatedBy: personRefSchema.nullable(),
  updatedAt: z.string().nullable(),
  changeReason: z.string().nullable(),
  submittedBy: personRefSchema.nullable(),
  submittedAt: z.string().nullable(),
  reviewComment: z.string().nullable(),
  releasedBy: personRefSchema.nullable(),
  releasedAt: z.string().nullable(),
  retiredAt: z.string().nullable(),
  releaseDiff: z.array(recipeFieldChangeSchema).nullable(),
  replaces: versionRef.nullable(),
  discardedBy: personRefSchema.nullable(),
  discardedAt: z.string().nullable(),
  discardReason: z.string().nullable(),
});
export type RecipeVersionView = z.infer<typeof recipeVersionViewSchema>;

export const modelSummaryViewSchema = z.object({
  id: z.string(),
  code: z.string(),
  name: z.string(),
  polePairs: z.number().int(),
  activeRecipe: z
    .object({ id: z.string(), version: z.number().int(), name: z.string().nullable(), body: recipeSchema })
    .nullable(),
  hallLayout: z.string().nullable(),
  countsPerTurn: z.number().nullable(),
  stations: z.array(z.object({ id: z.string(), name: z.string() })),
  unitsBuilt: z.number().int(),
  /** First-pass yield over the last 7 days: units whose first station measurement passed, of units first measured. */
  firstPassYield7d: z.object({
    firstMeasured: z.number().int(),
    passedFirst: z.number().int(),
    pct: z.number().nullable(),
  }),
});
export type ModelSummaryView = z.infer<typeof modelSummaryViewSchema>;

export const modelDetailViewSchema = modelSummaryViewSchema.extend({
  /** The working list: every version except discarded drafts. */
  versions: z.array(recipeVersionViewSchema),
  /** Discarded drafts, kept for the record, newest first. */
  discarded: z.array(recipeVersionViewSchema),
});
export type ModelDetailView = z.infer<typeof modelDetailViewSchema>;

/** Field-by-field changes from one version to another (`GET /api/recipes/:id/diff`). */
export const recipeDiffSchema = z.object({
  from: versionRef.extend({ modelId: z.string() }),
  to: versionRef.extend({ modelId: z.string() }),
  changes: z.array(recipeFieldChangeSchema),
});

const LAST_UNITS = 'Enter a whole number from 1 to 100,000.';

export const whatIfFiltersSchema = z
  .object({
    /** Measurements received from this time (ISO 8601); empty: no lower bound. */
    from: z.string().datetime({ offset: true }).optional(),
    to: z.string().datetime({ offset: true }).optional(),
    stationIds: z.array(z.string().uuid()).max(100).optional(),
    /** The most recent units of the model to replay (each unit's station measurements). */
    lastUnits: z.number(LAST_UNITS).int(LAST_UNITS).min(1, LAST_UNITS).max(100_000, LAST_UNITS).default(1000),
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, {
    message: 'The start of the time range must not be after its end.',
    path: ['to'],
  });
export type WhatIfFilters = z.infer<typeof whatIfFiltersSchema>;

export const startWhatIfSchema = z.object({ filters: whatIfFiltersSchema.optional() });

/** Counts of offsets in 1 °e bins, `fromDeg` is the lower edge of the first bin. */
const offsetHistogramSchema = z.object({
  fromDeg: z.number(),
  binDeg: z.number(),
  counts: z.array(z.number().int()),
});
export type OffsetHistogram = z.infer<typeof offsetHistogramSchema>;

const outcome = z.object({ verdict: z.string(), offsetDeg: z.number().nullable() });

const whatIfChangedUnitSchema = z.object({
  unitId: z.string(),
  serial: z.string(),
  measurementId: z.string(),
  receivedAt: z.string(),
  before: outcome,
  after: outcome,
  /** Check codes whose outcome differs between the two versions. */
  checks: z.array(z.string()),
  /** The unit's component lots (absent in runs stored before lots were recorded). */
  lots: z
    .object({
      hallBoard: z.string().nullable(),
      magnetRing: z.string().nullable(),
      stator: z.string().nullable(),
    })
    .optional(),
});
export type WhatIfChangedUnit = z.infer<typeof whatIfChangedUnitSchema>;

export type ComponentLotKind = 'hallBoard' | 'magnetRing' | 'stator';

export const COMPONENT_LOT_LABELS: Record<ComponentLotKind, string> = {
  hallBoard: 'Hall-board lot',
  magnetRing: 'Magnet-ring lot',
  stator: 'Stator lot',
};

/** One component lot among the replayed units: how many were replayed and how many would change. */
const whatIfLotGroupSchema = z.object({
  /** The lot code; null for units registered without one. */
  lot: z.string().nullable(),
  replayed: z.number().int(),
  changed: z.number().int(),
  passToFail: z.number().int(),
  failToPass: z.number().int(),
});
export type WhatIfLotGroup = z.infer<typeof whatIfLotGroupSchema>;

const whatIfSummarySchema = z.object({
  measurements: z.number().int(),
  passToFail: z.number().int(),
  failToPass: z.number().int(),
  unchanged: z.number().int(),
  unusable: z.number().int(),
  /** How many verdict changes each check's outcome took part in, by check code. */
  causes: z.array(z.object({ code: z.string(), label: z.string(), count: z.number().int() })),
  histogram: z.object({ draft: offsetHistogramSchema, inForce: offsetHistogramSchema }),
  /** Changed units, at most 500 listed (the counts above are complete). */
  changed: z.array(whatIfChangedUnitSchema),
  /**
   * Changed units grouped by component lot, for each kind of lot: lots with at least one change, most
   * changes first (at most 50 per kind; counts are complete). Absent in runs stored before lots were recorded.
   */
  lots: z
    .object({
      hallBoard: z.array(whatIfLotGroupSchema),
      magnetRing: z.array(whatIfLotGroupSchema),
      stator: z.array(whatIfLotGroupSchema),
    })
    .optional(),
  measurementsPerSecond: z.number(),
});
export type WhatIfSummary = z.infer<typeof whatIfSummarySchema>;

export const whatIfRunViewSchema = z.object({
  id: z.string(),
  recipe: versionRef,
  baseline: versionRef,
  modelId: z.string(),
  status: z.enum(WHAT_IF_STATUSES),
  filters: whatIfFiltersSchema,
  total: z.number().int(),
  processed: z.number().int(),
  summary: whatIfSummarySchema.nullable(),
  error: z.string().nullable(),
  requestedBy: personRefSchema.nullable(),
  createdAt: z.string(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
});
export type WhatIfRunView = z.infer<typeof whatIfRunViewSchema>;

/** Progress of a what-if run, pushed over the event hub (Server-Sent Events to the recipe screens). */
export const whatIfProgressSchema = z.object({
  type: z.literal('whatif.progress'),
  runId: z.string(),
  status: z.enum(WHAT_IF_STATUSES),
  processed: z.number().int(),
  total: z.number().int(),
  at: z.string(),
});
export type WhatIfProgress = z.infer<typeof whatIfProgressSchema>;
