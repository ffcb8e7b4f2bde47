import { z } from 'zod';
import { calibrationViewSchema } from './calibrations';
import { serialSchema } from './serial';
import { travelerSummarySchema } from './travelers';

/** Units: one motor by its serial, with its state and history. */

/** Values of `units.status` (pgEnum `unit_status`). */
export const UNIT_STATUSES = ['new', 'calibrated', 'failed', 'on_hold', 'scrapped'] as const;
export const unitStatusSchema = z.enum(UNIT_STATUSES);
export type UnitStatus = z.infer<typeof unitStatusSchema>;

export const unitViewSchema = z.object({
  id: z.string(),
  serial: z.string(),
  model: z.object({ id: z.string(), code: z.string(), name: z.string(), polePairs: z.number().int() }),
  workOrder: z.string().nullable(),
  lots: z.object({
    hallBoard: z.string().nullable(),
    magnetRing: z.string().nullable(),
    stator: z.string().nullable(),
  }),
  status: unitStatusSchema,
  holdReason: z.string().nullable(),
  attempts: z.number().int(),
  maxAttempts: z.number().int().nullable(),
  currentOffsetDeg: z.number().nullable(),
  currentOffsetCounts: z.number().int().nullable(),
  programmingMismatch: z.boolean(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type UnitView = z.infer<typeof unitViewSchema>;

export const unitDetailSchema = z.object({
  unit: unitViewSchema,
  calibrations: z.array(calibrationViewSchema),
  travelers: z.array(travelerSummarySchema),
});
export type UnitDetail = z.infer<typeof unitDetailSchema>;

export const registerUnitSchema = z.object({
  serial: serialSchema,
  modelId: z.string().uuid('Choose a model'),
  workOrder: z.string().trim().max(64).optional(),
  hallBoardLot: z.string().trim().max(64).optional(),
  magnetRingLot: z.string().trim().max(64).optional(),
  statorLot: z.string().trim().max(64).optional(),
});
export type RegisterUnit = z.infer<typeof registerUnitSchema>;
