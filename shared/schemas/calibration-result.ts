import { z } from 'zod';
import { directionSchema, edgeKindSchema, hallSensorSchema } from './measurement';

/**
 * What the calibration engine returns for one measurement. All angles are electrical degrees wrapped to
 * (−180, 180] unless named otherwise; speeds are mechanical rpm; the offset is the value firmware adds
 * to its hall-derived angle to get the true rotor angle.
 */

export const checkCodeSchema = z.enum([
  'offset.within_limits',
  'edges.residual_spread',
  'bemf.phase_sequence',
  'hall.all_switching',
  'hall.valid_states',
  'direction.as_declared',
  'speed.within_window',
  'turns.enough',
  'fit.residual',
  'speed.variation',
  'capture.ke_within_limits',
]);
export type CheckCode = z.infer<typeof checkCodeSchema>;

export const checkSchema = z.object({
  /** Stable code; screens and statistics key on it. */
  code: checkCodeSchema,
  passed: z.boolean(),
  /** The measured value the check judged (null when nothing could be measured). */
  value: z.union([z.number(), z.string(), z.null()]),
  /** The limit it was judged against: a maximum, a [min, max] window, or a description. */
  limit: z.union([z.number(), z.tuple([z.number(), z.number()]), z.string(), z.null()]),
  /** Unit of value and limit: "deg", "rpm", "turns", "%", "V/krpm" or "" when unitless. */
  unit: z.string(),
  /** One sentence for the operator. */
  message: z.string(),
});
export type Check = z.infer<typeof checkSchema>;

export const edgeTypeResultSchema = z.object({
  sensor: hallSensorSchema,
  edge: edgeKindSchema,
  /** Edges of this type that entered the offset, all segments. */
  count: z.number().int(),
  /** Mean over segments of (this type's mean − the segment offset): placement error of this edge. */
  residualDeg: z.number().nullable(),
  /** Circular standard deviation of this type's single-edge offsets (jitter, magnetisation). */
  spreadDeg: z.number().nullable(),
});
export type EdgeTypeResult = z.infer<typeof edgeTypeResultSchema>;

export const sensorResultSchema = z.object({
  sensor: hallSensorSchema,
  /** Edges seen after debouncing, all segments. */
  edges: z.number().int(),
  /** Bounce edges removed by debouncing. */
  bounceEdges: z.number().int(),
  /** High time over one electrical turn, % (50 % is ideal). */
  dutyPct: z.number().nullable(),
  /** Placement error of the sensor: mean of its rise and fall residuals. */
  placementDeg: z.number().nullable(),
});
export type SensorResult = z.infer<typeof sensorResultSchema>;

export const spacingResultSchema = z.object({
  from: hallSensorSchema,
  to: hallSensorSchema,
  /** Nominal angle from `from`'s rise to `to`'s rise, forward, [0, 360). */
  nominalDeg: z.number(),
  measuredDeg: z.number().nullable(),
  errorDeg: z.number().nullable(),
});
export type SpacingResult = z.infer<typeof spacingResultSchema>;

export const segmentResultSchema = z.object({
  index: z.number().int(),
  /** Direction as declared by the station. */
  direction: directionSchema,
  /** Direction the hall sequence shows (null when it cannot tell). */
  hallDirection: directionSchema.nullable(),
  /** Direction the back-EMF crossing order shows (null when it cannot tell, e.g. one channel). */
  bemfDirection: directionSchema.nullable(),
  /** Offset measured in this segment: geometric offset + lag (forward) or − lag (reverse). */
  offsetDeg: z.number().nullable(),
  /** Mean mechanical speed over the segment. */
  speedRpm: z.number(),
  electricalHz: z.number(),
  speedStartRpm: z.number(),
  speedEndRpm: z.number(),
  /** (max − min) / mean of the local speed, %. */
  speedVariationPct: z.number(),
  /** Electrical turns spanned by the crossings. */
  electricalTurns: z.number(),
  /** RMS residual of the crossings about the local angle fit. */
  fitResidualDeg: z.number(),
  crossingsUsed: z.number().int(),
  edgesUsed: z.number().int(),
  /** Edges outside the crossings' time span, not used. */
  edgesOutsideFit: z.number().int(),
  /** Offset per pole pair (edges grouped by electrical turn modulo pole pairs, counted from capture start). */
  polePairOffsetsDeg: z.array(z.number().nullable()),
  /** Hall states entered that are not valid for the layout, as ABC bit strings. */
  invalidStates: z.array(z.string()),
});
export type SegmentResult = z.infer<typeof segmentResultSchema>;

export const driveImpactSchema = z.object({
  /** Torque per amp kept by field-oriented control if the offset were not corrected: cos δ. */
  torqueFactor: z.number(),
  /** Share of the current pushed into the d-axis: sin δ (signed). */
  dAxisShare: z.number(),
  /** Six-step torque ripple (max − min) / mean with ideal sector boundaries, %. */
  sixStepRippleIdealPct: z.number(),
  /** Six-step torque ripple with the measured boundaries (offset and residuals), %. */
  sixStepRippleMeasuredPct: z.number(),
  /** Mean six-step torque with the measured boundaries over that with ideal ones. */
  sixStepMeanTorqueRatio: z.number(),
});
export type DriveImpact = z.infer<typeof driveImpactSchema>;

export const captureFiguresSchema = z.object({
  /** Channels the capture carried: phase voltages (referenced to their virtual neutral) or line to line. */
  channels: z.enum(['phase', 'line']),
  samples: z.number().int(),
  sampleRateHz: z.number(),
  /** Fundamental amplitude per channel at the capture's mean speed, V peak. */
  amplitudeV: z.array(z.number()),
  /** Line-to-line back-EMF constant, fundamental peak, V per 1000 mechanical rpm. */
  keVPerKrpmPeak: z.number(),
  /** Line-to-line back-EMF constant, fundamental RMS (peak / √2), V per 1000 rpm. */
  keVPerKrpmRms: z.number(),
  /** Total harmonic distortion per channel, % of the fundamental (harmonics 2…maxHarmonic). */
  thdPct: z.array(z.number()),
  maxHarmonic: z.number().int(),
  /** (max − min) / mean of the channel fundamental amplitudes, %. */
  amplitudeImbalancePct: z.number(),
  /** Largest deviation of the channel fundamentals from 120° spacing, degrees. */
  spacingImbalanceDeg: z.number(),
});
export type CaptureFigures = z.infer<typeof captureFiguresSchema>;

export const calibrationResultSchema = z.object({
  engineVersion: z.string(),
  measurementId: z.string(),
  serial: z.string(),
  verdict: z.enum(['pass', 'fail']),
  /**
   * The offset to program, electrical degrees in (−180, 180]: with both directions measured, the geometric
   * offset (lag removed); otherwise the offset seen in the measured direction(s). Null only when no edge
   * could be placed on the angle fit.
   */
  offsetDeg: z.number().nullable(),
  /** offsetDeg in firmware counts: round half away from zero, signed or unsigned per recipe. */
  offsetCounts: z.number().int().nullable(),
  /** Half the forward − reverse difference; null unless both directions were measured. */
  lagDeg: z.number().nullable(),
  /** Speed-independent part of the lag (magnetic hysteresis); null unless two or more speeds allow the split. */
  hysteresisDeg: z.number().nullable(),
  /** Time-like part of the lag (sensor switching latency), µs; null unless the split is possible. */
  latencyUs: z.number().nullable(),
  /** Mean mechanical speed over all segments (weighted by duration). */
  speedRpm: z.number(),
  electricalHz: z.number(),
  /** Largest within-segment speed variation, %. */
  speedVariationPct: z.number(),
  /** Electrical turns over all segments. */
  electricalTurns: z.number(),
  /** RMS crossing residual about the angle fit over all segments. */
  fitResidualDeg: z.number(),
  /** Largest spread between per-pole-pair offsets within a segment (magnetisation spread). */
  polePairSpreadDeg: z.number().nullable(),
  segments: z.array(segmentResultSchema),
  /** The six edge types, always in the order A rise, A fall, B rise, B fall, C rise, C fall. */
  edges: z.array(edgeTypeResultSchema),
  sensors: z.array(sensorResultSchema),
  spacing: z.array(spacingResultSchema),
  /** Valid hall states in forward order (ABC bit strings), derived from the recipe's rise angles. */
  validStates: z.array(z.string()),
  drive: driveImpactSchema.nullable(),
  /** Present when the input was a sampled capture. */
  capture: captureFiguresSchema.optional(),
  checks: z.array(checkSchema),
});
export type CalibrationResult = z.infer<typeof calibrationResultSchema>;
