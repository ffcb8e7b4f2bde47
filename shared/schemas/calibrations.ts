import { z } from 'zod';
import { calibrationResultSchema } from './calibration-result';

/** Calibrations: the engine's verdict on one measurement, as stations, screens and travelers read it. */

/** Values of `calibrations.verdict` (pgEnum `calibration_verdict`) and of the views. */
export const CALIBRATION_VERDICTS = ['pass', 'fail', 'unusable'] as const;
/** 'station': the result the station got (it judged the unit); 'recompute': an engineer's later analysis. */
export const CALIBRATION_PURPOSES = ['station', 'recompute'] as const;
export const PROGRAMMING_STATUSES = ['pending', 'confirmed', 'mismatch'] as const;

export const calibrationVerdictSchema = z.enum(CALIBRATION_VERDICTS);
export type CalibrationVerdict = z.infer<typeof calibrationVerdictSchema>;
export const calibrationPurposeSchema = z.enum(CALIBRATION_PURPOSES);

export const calibrationErrorSchema = z.object({
  code: z.string(),
  message: z.string(),
  issues: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
});

export const programmingStatusSchema = z.object({
  status: z.enum(PROGRAMMING_STATUSES),
  expectedCounts: z.number().int().nullable(),
  writtenCounts: z.number().int().nullable(),
  readBackCounts: z.number().int().nullable(),
  checksum: z.string().nullable(),
  confirmedAt: z.string().nullable(),
});
export type ProgrammingStatus = z.infer<typeof programmingStatusSchema>;

/** A calibration as the station and the screens read it. */
export const calibrationViewSchema = z.object({
  calibrationId: z.string(),
  measurementId: z.string(),
  serial: z.string(),
  stationId: z.string(),
  stationName: z.string(),
  recipe: z.object({ id: z.string(), version: z.number().int(), name: z.string().nullable() }),
  engineVersion: z.string(),
  verdict: calibrationVerdictSchema,
  /** 'station': the result the station got (it judged the unit); 'recompute': an engineer's later analysis. */
  purpose: calibrationPurposeSchema,
  /** Why a recomputation was asked for. */
  reason: z.string().nullable(),
  offsetDeg: z.number().nullable(),
  offsetCounts: z.number().int().nullable(),
  attempt: z.number().int().nullable(),
  maxAttempts: z.number().int(),
  computedAt: z.string(),
  receivedAt: z.string(),
  computeMs: z.number().nullable(),
  /** What happens next for this unit (operator wording). */
  nextAction: z.string(),
  result: calibrationResultSchema.nullable(),
  error: calibrationErrorSchema.nullable(),
  programming: programmingStatusSchema,
});
export type CalibrationView = z.infer<typeof calibrationViewSchema>;

export const programmingConfirmationSchema = z.object({
  /** The value written into the unit, firmware counts. */
  writtenCounts: z.number().int(),
  /** The value read back from the unit after writing, firmware counts. */
  readBackCounts: z.number().int(),
  /** The unit's checksum of its calibration block, as the station reports it (opaque). */
  checksum: z.string().max(64).optional(),
});
export type ProgrammingConfirmation = z.infer<typeof programmingConfirmationSchema>;

/** An engineer's recomputation of a stored measurement (default: the model's active recipe version). */
export const recomputeSchema = z.object({
  recipeId: z.string().uuid().optional(),
  reason: z.string().trim().min(3, 'Give a reason (at least 3 characters)').max(500),
});
export type Recompute = z.infer<typeof recomputeSchema>;
