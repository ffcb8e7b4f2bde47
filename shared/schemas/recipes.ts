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

export interface PersonRef {
  id: string;
  displayName: string;
}

export interface RecipeVersionView {
  id: string;
  modelId: string;
  modelCode: string;
  version: number;
  status: RecipeStatus;
  body: z.infer<typeof recipeSchema>;
  notes: string | null;
  revision: number;
  basedOn: { id: string; version: number } | null;
  createdBy: PersonRef | null;
  createdAt: string;
  updatedBy: PersonRef | null;
  updatedAt: string | null;
  changeReason: string | null;
  submittedBy: PersonRef | null;
  submittedAt: string | null;
  reviewComment: string | null;
  releasedBy: PersonRef | null;
  releasedAt: string | null;
  retiredAt: string | null;
  releaseDiff: RecipeFieldChange[] | null;
  replaces: { id: string; version: number } | null;
  discardedBy: PersonRef | null;
  discardedAt: string | null;
  discardReason: string | null;
}

export interface ModelSummaryView {
  id: string;
  code: string;
  name: string;
  polePairs: number;
  activeRecipe: {
    id: string;
    version: number;
    name: string | null;
    body: z.infer<typeof recipeSchema>;
  } | null;
  hallLayout: string | null;
  countsPerTurn: number | null;
  stations: { id: string; name: string }[];
  unitsBuilt: number;
  /** First-pass yield over the last 7 days: units whose first station measurement passed, of units first measured. */
  firstPassYield7d: { firstMeasured: number; passedFirst: number; pct: number | null };
}

export interface ModelDetailView extends ModelSummaryView {
  /** The working list: every version except discarded drafts. */
  versions: RecipeVersionView[];
  /** Discarded drafts, kept for the record, newest first. */
  discarded: RecipeVersionView[];
}

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
export interface OffsetHistogram {
  fromDeg: number;
  binDeg: number;
  counts: number[];
}

export interface WhatIfChangedUnit {
  unitId: string;
  serial: string;
  measurementId: string;
  receivedAt: string;
  before: { verdict: string; offsetDeg: number | null };
  after: { verdict: string; offsetDeg: number | null };
  /** Check codes whose outcome differs between the two versions. */
  checks: string[];
  /** The unit's component lots (absent in runs stored before lots were recorded). */
  lots?: { hallBoard: string | null; magnetRing: string | null; stator: string | null };
}

export type ComponentLotKind = 'hallBoard' | 'magnetRing' | 'stator';

export const COMPONENT_LOT_LABELS: Record<ComponentLotKind, string> = {
  hallBoard: 'Hall-board lot',
  magnetRing: 'Magnet-ring lot',
  stator: 'Stator lot',
};

/** One component lot among the replayed units: how many were replayed and how many would change. */
export interface WhatIfLotGroup {
  /** The lot code; null for units registered without one. */
  lot: string | null;
  replayed: number;
  changed: number;
  passToFail: number;
  failToPass: number;
}

export interface WhatIfSummary {
  measurements: number;
  passToFail: number;
  failToPass: number;
  unchanged: number;
  unusable: number;
  /** How many verdict changes each check's outcome took part in, by check code. */
  causes: { code: string; label: string; count: number }[];
  histogram: { draft: OffsetHistogram; inForce: OffsetHistogram };
  /** Changed units, at most 500 listed (the counts above are complete). */
  changed: WhatIfChangedUnit[];
  /**
   * Changed units grouped by component lot, for each kind of lot: lots with at least one change, most
   * changes first (at most 50 per kind; counts are complete). Absent in runs stored before lots were recorded.
   */
  lots?: Record<ComponentLotKind, WhatIfLotGroup[]>;
  measurementsPerSecond: number;
}

export interface WhatIfRunView {
  id: string;
  recipe: { id: string; version: number };
  baseline: { id: string; version: number };
  modelId: string;
  status: (typeof WHAT_IF_STATUSES)[number];
  filters: WhatIfFilters;
  total: number;
  processed: number;
  summary: WhatIfSummary | null;
  error: string | null;
  requestedBy: PersonRef | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
}

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
