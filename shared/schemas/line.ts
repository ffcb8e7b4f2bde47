import { z } from 'zod';
import { calibrationResultSchema } from './calibration-result';
import { recipeSchema } from './recipe';

import { serialSchema } from './serial';

export { serialSchema };

export const unitStatusSchema = z.enum(['new', 'calibrated', 'failed', 'on_hold', 'scrapped']);
export type UnitStatus = z.infer<typeof unitStatusSchema>;

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

export const calibrationErrorSchema = z.object({
  code: z.string(),
  message: z.string(),
  issues: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
});

export const programmingStatusSchema = z.object({
  status: z.enum(['pending', 'confirmed', 'mismatch']),
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
  verdict: z.enum(['pass', 'fail', 'unusable']),
  /** 'station': the result the station got (it judged the unit); 'recompute': an engineer's later analysis. */
  purpose: z.enum(['station', 'recompute']),
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

export const programmingConfirmationSchema = z.object({
  /** The value written into the unit, firmware counts. */
  writtenCounts: z.number().int(),
  /** The value read back from the unit after writing, firmware counts. */
  readBackCounts: z.number().int(),
  /** The unit's checksum of its calibration block, as the station reports it (opaque). */
  checksum: z.string().max(64).optional(),
});
export type ProgrammingConfirmation = z.infer<typeof programmingConfirmationSchema>;

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
  travelers: z.array(
    z.object({
      id: z.string(),
      printNumber: z.number().int(),
      pageSize: z.string(),
      sha256: z.string(),
      createdAt: z.string(),
    }),
  ),
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

/** An engineer's recomputation of a stored measurement (default: the model's active recipe version). */
export const recomputeSchema = z.object({
  recipeId: z.string().uuid().optional(),
  reason: z.string().trim().min(3, 'Give a reason (at least 3 characters)').max(500),
});
export type Recompute = z.infer<typeof recomputeSchema>;

/** Columns of a work-order CSV, in template order; serial and model (code) are required. */
export const WORK_ORDER_COLUMNS = [
  'serial',
  'model',
  'work_order',
  'hall_board_lot',
  'magnet_ring_lot',
  'stator_lot',
] as const;

export const importRowErrorSchema = z.object({
  row: z.number().int(),
  serial: z.string().nullable(),
  message: z.string(),
});
export const importReportSchema = z.object({
  imported: z.number().int(),
  rows: z.number().int(),
  errors: z.array(importRowErrorSchema),
});
export type ImportReport = z.infer<typeof importReportSchema>;

export const modelViewSchema = z.object({
  id: z.string(),
  code: z.string(),
  name: z.string(),
  polePairs: z.number().int(),
  activeRecipe: z
    .object({ id: z.string(), version: z.number().int(), name: z.string().nullable(), body: recipeSchema })
    .nullable(),
});
export type ModelView = z.infer<typeof modelViewSchema>;

export const stationViewSchema = z.object({
  id: z.string(),
  name: z.string(),
  line: z.string(),
  allowedModels: z.array(z.object({ id: z.string(), code: z.string() })),
  lastSeenAt: z.string().nullable(),
  attendedBy: z.object({ id: z.string(), displayName: z.string() }).nullable(),
  keys: z.array(
    z.object({
      id: z.string(),
      label: z.string(),
      prefix: z.string(),
      createdAt: z.string(),
      lastUsedAt: z.string().nullable(),
      revokedAt: z.string().nullable(),
    }),
  ),
});
export type StationView = z.infer<typeof stationViewSchema>;

export const createStationSchema = z.object({
  name: z.string().trim().min(2).max(40),
  line: z.string().trim().min(1).max(40),
  allowedModelIds: z.array(z.string().uuid()).min(1, 'Allow at least one model'),
});
export const updateStationSchema = createStationSchema.partial();
export const createStationKeySchema = z.object({ label: z.string().trim().min(2).max(60) });
export const stationKeyCreatedSchema = z.object({
  id: z.string(),
  label: z.string(),
  prefix: z.string(),
  /** The key itself, shown this once; only its hash is kept. */
  key: z.string(),
});

/** Station health for the operator screen. */
export const stationHealthSchema = z.object({
  stationId: z.string(),
  lastSeenAt: z.string().nullable(),
  secondsSinceSeen: z.number().nullable(),
  online: z.boolean(),
  queue: z.object({ waiting: z.number().int(), active: z.number().int(), failed: z.number().int() }),
});
