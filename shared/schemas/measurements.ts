import { z } from 'zod';
import { calibrationViewSchema } from './calibrations';

/**
 * What a station gets back for a posted measurement (the posted body itself is `measurement.ts`, the
 * station contract).
 */

/** Values of `measurements.source` (pgEnum `measurement_source`): timed edges, or a sampled capture. */
export const MEASUREMENT_SOURCES = ['timings', 'capture'] as const;

/** Answer to a posted measurement: where and how to get the result. */
export const measurementAcceptedSchema = z.object({
  measurementId: z.string(),
  serial: z.string(),
  status: z.enum(['queued', 'computed']),
  resultUrl: z.string(),
  /** True when this exact body had been posted before (nothing new was stored). */
  repeated: z.boolean(),
});
export type MeasurementAccepted = z.infer<typeof measurementAcceptedSchema>;

export const measurementResultSchema = z.object({
  measurementId: z.string(),
  status: z.enum(['pending', 'computed']),
  calibration: calibrationViewSchema.nullable(),
});
export type MeasurementResult = z.infer<typeof measurementResultSchema>;

export const resultQuerySchema = z.object({
  /** Wait up to this long for the result to commit (long-poll), milliseconds. */
  waitMs: z.coerce.number().int().min(0).max(30_000).default(0),
});
