import { z } from 'zod';
import { calibrationViewSchema } from './calibrations';
import { unitViewSchema } from './units';

/**
 * A unit's whole record (quality's unit page, its PDF and its ZIP): every event of the unit in time
 * order, worded for people, with names instead of ids.
 */

export const TIMELINE_KINDS = [
  'registered',
  'measurement',
  'calibration',
  'recomputation',
  'programming',
  'hold',
  'release',
  'traveler',
  'print',
  'investigation',
  'qualification',
  'audit',
] as const;
export const timelineKindSchema = z.enum(TIMELINE_KINDS);
export type TimelineKind = z.infer<typeof timelineKindSchema>;

/** What a kind of entry is called on the page's filter and in the PDF. */
export const TIMELINE_KIND_LABELS: Record<TimelineKind, string> = {
  registered: 'Registration',
  measurement: 'Measurement',
  calibration: 'Calibration',
  recomputation: 'Recomputation',
  programming: 'Programming',
  hold: 'Hold',
  release: 'Release',
  traveler: 'Traveler',
  print: 'Print',
  investigation: 'Investigation',
  qualification: 'Qualification',
  audit: 'Audit entry',
};

export const timelineEntrySchema = z.object({
  /** ISO 8601 instant. */
  at: z.string(),
  kind: timelineKindSchema,
  /** One line in plain words: "Calibrated at EOL-2: PASS, attempt 1 of 3". */
  title: z.string(),
  /** The person (or the line's own rule) who did it, by name; null when nobody is recorded. */
  who: z.string().nullable(),
  /** Further facts as label/value lines (station, recipe version, reason, …). */
  details: z.array(z.object({ label: z.string(), value: z.string() })),
  /** How the entry reads at a glance; shown by words and a mark as well as by colour. */
  tone: z.enum(['good', 'bad', 'warn', 'neutral']),
  /** Plain names of the checks that failed (calibrations only). */
  failedChecks: z.array(z.string()),
  /** The station's measurement id behind a measurement or calibration (raw timings, download). */
  measurementId: z.string().nullable(),
});
export type TimelineEntry = z.infer<typeof timelineEntrySchema>;

export const measurementFileSchema = z.object({
  measurementId: z.string(),
  stationName: z.string(),
  operatorName: z.string().nullable(),
  source: z.enum(['timings', 'capture']),
  receivedAt: z.string(),
  payloadSha256: z.string(),
  /** Characters of the body as posted. */
  chars: z.number().int(),
});
export type MeasurementFile = z.infer<typeof measurementFileSchema>;

export const recordHoldSchema = z.object({
  reason: z.string(),
  source: z.enum(['person', 'retest_policy', 'programming_mismatch']),
  heldBy: z.string(),
  heldAt: z.string(),
  investigation: z.string().nullable(),
  releasedAt: z.string().nullable(),
  releasedBy: z.string().nullable(),
  disposition: z.enum(['use_as_is', 'rework', 'recalibrate', 'scrap']).nullable(),
  releaseReason: z.string().nullable(),
  attemptBudget: z.number().int().nullable(),
});
export type RecordHold = z.infer<typeof recordHoldSchema>;

export const recordProgrammingSchema = z.object({
  calibrationId: z.string(),
  stationName: z.string(),
  expectedCounts: z.number().int(),
  writtenCounts: z.number().int(),
  readBackCounts: z.number().int(),
  checksum: z.string().nullable(),
  matches: z.boolean(),
  confirmedAt: z.string(),
});
export type RecordProgramming = z.infer<typeof recordProgrammingSchema>;

export const recordRecipeSchema = z.object({
  id: z.string(),
  version: z.number().int(),
  name: z.string().nullable(),
  /** The recipe version's limits and attempt budget, as label/value lines. */
  limits: z.array(z.object({ label: z.string(), value: z.string() })),
});
export type RecordRecipe = z.infer<typeof recordRecipeSchema>;

export const unitRecordSchema = z.object({
  unit: unitViewSchema,
  /** Oldest first. */
  timeline: z.array(timelineEntrySchema),
  /** Every calibration of the unit, oldest first (station results and recomputations). */
  calibrations: z.array(calibrationViewSchema),
  measurements: z.array(measurementFileSchema),
  programming: z.array(recordProgrammingSchema),
  holds: z.array(recordHoldSchema),
  recipes: z.array(recordRecipeSchema),
  investigations: z.array(
    z.object({ id: z.string(), reference: z.string(), title: z.string(), status: z.string() }),
  ),
});
export type UnitRecord = z.infer<typeof unitRecordSchema>;
