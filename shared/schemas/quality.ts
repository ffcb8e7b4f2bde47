import { z } from 'zod';
import { unitStatusSchema } from './units';
import { serialSchema } from './serial';
import type { Recipe } from './recipe';
import type { TracedSegment } from '../calibration/trace';
import { calibrationVerdictSchema } from './calibrations';

/** An empty form field means "no filter". */
const opt = <T extends z.ZodType>(schema: T) =>
  z.preprocess((v) => (v === '' || v === null ? undefined : v), schema.optional());
const text = (max: number) => z.string().trim().min(1).max(max);

/** Values of pgEnum `hold_source`: who or what put a unit on hold. */
export const HOLD_SOURCES = ['person', 'retest_policy', 'programming_mismatch'] as const;
export const HOLD_DISPOSITIONS = ['use_as_is', 'rework', 'recalibrate', 'scrap'] as const;
export const holdDispositionSchema = z.enum(HOLD_DISPOSITIONS);
export type HoldDisposition = z.infer<typeof holdDispositionSchema>;

export const UNIT_SEARCH_SORTS = ['serial', 'status', 'createdAt', 'updatedAt', 'offsetDeg'] as const;

/**
 * Containment search: any mix of filters. The calibration filters (station, operator, time, recipe,
 * engine, verdict, offset, failed check) must all hold for one station calibration of the unit.
 */
export const unitSearchFilterSchema = z.object({
  modelId: opt(z.uuid('Choose a model from the list')),
  serialPrefix: opt(z.string().trim().toUpperCase().max(40)),
  serialFrom: opt(serialSchema),
  serialTo: opt(serialSchema),
  /** Any of the three lots. */
  lot: opt(text(64)),
  hallBoardLot: opt(text(64)),
  magnetRingLot: opt(text(64)),
  statorLot: opt(text(64)),
  status: opt(unitStatusSchema),
  builtFrom: opt(z.iso.datetime({ offset: true, message: 'Give the date and time the range starts' })),
  builtTo: opt(z.iso.datetime({ offset: true, message: 'Give the date and time the range ends' })),
  measuredFrom: opt(z.iso.datetime({ offset: true, message: 'Give the date and time the range starts' })),
  measuredTo: opt(z.iso.datetime({ offset: true, message: 'Give the date and time the range ends' })),
  stationId: opt(z.uuid('Choose a station from the list')),
  operatorId: opt(z.uuid('Choose an operator from the list')),
  recipeId: opt(z.uuid('Choose a recipe version from the list')),
  engineVersion: opt(text(40)),
  verdict: opt(calibrationVerdictSchema),
  offsetMinDeg: opt(z.coerce.number().min(-180).max(180)),
  offsetMaxDeg: opt(z.coerce.number().min(-180).max(180)),
  failedCheck: opt(text(60)),
  programmingMismatch: opt(z.enum(['true', 'false']).transform((v) => v === 'true')),
});
export type UnitSearchFilter = z.infer<typeof unitSearchFilterSchema>;

export const unitSearchQuerySchema = unitSearchFilterSchema.extend({
  sort: z.enum(UNIT_SEARCH_SORTS).default('serial'),
  dir: z.enum(['asc', 'desc']).default('asc'),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
});
export type UnitSearchQuery = z.infer<typeof unitSearchQuerySchema>;

export const unitSearchRowSchema = z.object({
  id: z.uuid(),
  serial: z.string(),
  modelCode: z.string(),
  workOrder: z.string().nullable(),
  hallBoardLot: z.string().nullable(),
  magnetRingLot: z.string().nullable(),
  statorLot: z.string().nullable(),
  status: unitStatusSchema,
  holdReason: z.string().nullable(),
  attempts: z.number().int(),
  currentOffsetDeg: z.number().nullable(),
  programmingMismatch: z.boolean(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type UnitSearchRow = z.infer<typeof unitSearchRowSchema>;
export const unitSearchPageSchema = z.object({
  rows: z.array(unitSearchRowSchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
});
export type UnitSearchPage = z.infer<typeof unitSearchPageSchema>;

/** The filter names a search understands, in the order the form shows them (the URL keeps these). */
export const UNIT_SEARCH_FILTER_KEYS = Object.keys(
  unitSearchFilterSchema.shape,
) as (keyof UnitSearchFilter)[];

/** A search saved under a name: the filter is kept as the form sends it (strings). */
export const newSavedSearchSchema = z.object({
  name: z.string().trim().min(2, 'Give the search a name (at least 2 characters)').max(100),
  filter: z.record(z.string(), z.string().max(200)),
});
export type NewSavedSearch = z.infer<typeof newSavedSearchSchema>;

export const savedSearchSchema = z.object({
  id: z.uuid(),
  name: z.string(),
  filter: z.record(z.string(), z.string()),
  savedBy: z.string(),
  mine: z.boolean(),
  createdAt: z.string(),
});
export type SavedSearch = z.infer<typeof savedSearchSchema>;

/** The lists behind the search form's choices that the line's own lists do not give. */
export const searchChoicesSchema = z.object({
  operators: z.array(z.object({ id: z.uuid(), name: z.string() })),
  recipes: z.array(
    z.object({ id: z.uuid(), modelCode: z.string(), version: z.number().int(), status: z.string() }),
  ),
  engineVersions: z.array(z.string()),
});
export type SearchChoices = z.infer<typeof searchChoicesSchema>;

const reasonSchema = z.string().trim().min(3, 'Give a reason (at least 3 characters)').max(500);

export const newInvestigationSchema = z.object({
  title: z.string().trim().min(3, 'Give the case a title (at least 3 characters)').max(200),
  customerRef: opt(z.string().trim().max(100)),
  symptom: opt(z.string().trim().max(2000)),
  receivedOn: opt(z.iso.date('Give the date the return arrived (YYYY-MM-DD)')),
});
export type NewInvestigation = z.infer<typeof newInvestigationSchema>;

/**
 * Bulk hold: the units are a selection (serials) or every unit a search finds, never both. A hold may
 * link to an investigation, existing or opened with it.
 */
export const bulkHoldSchema = z
  .object({
    serials: z.array(serialSchema).min(1).max(20000).optional(),
    search: unitSearchFilterSchema.optional(),
    reason: reasonSchema,
    investigationId: opt(z.uuid()),
    newInvestigation: newInvestigationSchema.optional(),
  })
  .refine((v) => (v.serials ? 1 : 0) + (v.search ? 1 : 0) === 1, {
    message: 'Hold either a selection of serials or the result of a search.',
    path: ['serials'],
  })
  .refine((v) => !(v.investigationId && v.newInvestigation), {
    message: 'Link either an existing investigation or a new one, not both.',
    path: ['investigationId'],
  });
export type BulkHold = z.infer<typeof bulkHoldSchema>;

export interface BulkHoldResult {
  held: number;
  alreadyHeld: number;
  scrapped: number;
  investigation: { id: string; reference: string } | null;
}

export const releaseSchema = z.object({
  serials: z.array(serialSchema).min(1).max(20000),
  disposition: z.enum(HOLD_DISPOSITIONS, 'Choose what happens to the units'),
  reason: reasonSchema,
});
export type Release = z.infer<typeof releaseSchema>;

export interface ReleaseResult {
  released: number;
  disposition: HoldDisposition;
  units: { serial: string; status: z.infer<typeof unitStatusSchema>; attempts: number }[];
}

/** The single-unit form kept from before bulk holds: hold, or release with a disposition. */
export const holdUnitSchema = z.discriminatedUnion('hold', [
  z.object({ hold: z.literal(true), reason: reasonSchema, investigationId: opt(z.uuid()) }),
  z.object({ hold: z.literal(false), reason: reasonSchema, disposition: holdDispositionSchema }),
]);

export interface HeldUnitRow {
  holdId: string;
  unitId: string;
  serial: string;
  modelCode: string;
  reason: string;
  source: (typeof HOLD_SOURCES)[number];
  heldBy: string | null;
  heldAt: string;
  /** Whole hours the unit has been on hold, by the server's clock. */
  ageHours: number;
  investigation: { id: string; reference: string; title: string } | null;
}

export const INVESTIGATION_STATUSES = ['open', 'contained', 'closed'] as const;
export const investigationStatusSchema = z.enum(INVESTIGATION_STATUSES);

export const investigationUpdateSchema = z.object({
  status: opt(investigationStatusSchema),
  title: opt(z.string().trim().min(3).max(200)),
  customerRef: opt(z.string().trim().max(100)),
  symptom: opt(z.string().trim().max(2000)),
  findings: opt(z.string().trim().max(5000)),
  containmentAction: opt(z.string().trim().max(5000)),
  rootCause: opt(z.string().trim().max(5000)),
  correctiveAction: opt(z.string().trim().max(5000)),
  verification: opt(z.string().trim().max(5000)),
});
export type InvestigationUpdate = z.infer<typeof investigationUpdateSchema>;

export const commentSchema = z.object({ body: z.string().trim().min(1, 'Write a comment').max(5000) });

export interface InvestigationSummary {
  id: string;
  reference: string;
  title: string;
  customerRef: string | null;
  status: z.infer<typeof investigationStatusSchema>;
  openedBy: string | null;
  createdAt: string;
  unitCount: number;
}

export interface InvestigationDetail extends InvestigationSummary {
  symptom: string | null;
  receivedOn: string | null;
  findings: string | null;
  containmentAction: string | null;
  rootCause: string | null;
  correctiveAction: string | null;
  verification: string | null;
  closedAt: string | null;
  units: { serial: string; status: z.infer<typeof unitStatusSchema>; holdReason: string | null }[];
  comments: { id: string; author: string; body: string; createdAt: string }[];
}

export function investigationReference(n: number): string {
  return `INV-${String(n).padStart(4, '0')}`;
}

/** The raw data behind a measurement, for the unit record (quality and engineers). */
export interface MeasurementTrace {
  measurementId: string;
  serial: string;
  source: 'timings' | 'capture';
  receivedAt: string;
  /** SHA-256 (hex) of the canonical measurement, stored when it was accepted. */
  payloadSha256: string;
  recipe: { id: string; version: number; body: Recipe } | null;
  segments: TracedSegment[];
  /** Why there is nothing to show, in plain words (no result yet, unusable data). */
  problem: string | null;
}
