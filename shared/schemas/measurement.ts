import { z } from 'zod';
import { serialSchema } from './serial';

/**
 * The measurement a test station uploads: for each segment of the run (one direction at one speed),
 * the hall edges and the back-EMF zero crossings it timed. Times are microseconds from capture start.
 * Angle conventions and the crossing table are in the project's domain notes (θ = 0 with the rotor
 * d-axis on phase A, forward = A→B→C).
 */

/** A hall sensor, named as in the recipe's `hallRiseDeg`. */
export const hallSensorSchema = z.enum(['A', 'B', 'C']);
export type HallSensor = z.infer<typeof hallSensorSchema>;

/** Edge kind as seen on the wire: rise = low→high, fall = high→low. */
export const edgeKindSchema = z.enum(['rise', 'fall']);
export type EdgeKind = z.infer<typeof edgeKindSchema>;

/** Back-EMF channel: phase to neutral (A, B, C; real or virtual neutral) or line to line (AB, BC, CA). */
export const bemfChannelSchema = z.enum(['A', 'B', 'C', 'AB', 'BC', 'CA']);
export type BemfChannel = z.infer<typeof bemfChannelSchema>;

/** Direction of rotation the station drove the rotor in; forward = θ increasing = A→B→C. */
export const directionSchema = z.enum(['forward', 'reverse']);
export type Direction = z.infer<typeof directionSchema>;

/**
 * The longest capture the product accepts, in seconds (a coast-down from speed to the end of the
 * speed window takes a few seconds; a minute leaves a wide margin). A time outside [0, this] is not a
 * measurement of a unit but a station fault, and is refused with 400 before anything is computed.
 */
export const MAX_CAPTURE_SECONDS = 60;
export const MAX_CAPTURE_US = MAX_CAPTURE_SECONDS * 1_000_000;

const timeUs = z
  .number({ error: 'must be a number of microseconds' })
  .refine(Number.isFinite, 'must be a finite number of microseconds')
  .refine((us) => us >= 0, 'must not be negative: times count from the start of the capture')
  .refine(
    (us) => us <= MAX_CAPTURE_US,
    `must be within the capture: at most ${MAX_CAPTURE_SECONDS} s (${MAX_CAPTURE_US} µs) after its start`,
  );

/** Printable ASCII without spaces: safe in a URL path, a log line and the database. */
const PRINTABLE_ID = /^[\x21-\x7e]+$/;

/** The station's idempotency key for one upload (a UUID is recommended). */
export const measurementIdSchema = z
  .string({ error: 'A measurement id is required.' })
  .min(1, 'The measurement id is empty.')
  .max(200, 'The measurement id is longer than 200 characters.')
  .regex(PRINTABLE_ID, 'The measurement id may hold only printable ASCII characters, without spaces.');

/** Free text from a station (labels): no control characters. */
const stationText = (max: number) =>
  z
    .string()
    .max(max, `is longer than ${max} characters`)
    .refine(
      (text) => ![...text].some((ch) => ch.charCodeAt(0) < 32 || ch.charCodeAt(0) === 127),
      'must not contain control characters',
    );

export const hallEdgeSchema = z.object({
  sensor: hallSensorSchema,
  edge: edgeKindSchema,
  /** Microseconds from capture start. */
  us: timeUs,
});
export type HallEdge = z.infer<typeof hallEdgeSchema>;

export const bemfCrossingSchema = z.object({
  channel: bemfChannelSchema,
  /** rise = the channel voltage goes from negative to positive. */
  edge: edgeKindSchema,
  /** Microseconds from capture start, as reported by the detector (its delay is removed by the engine). */
  us: timeUs,
});
export type BemfCrossing = z.infer<typeof bemfCrossingSchema>;

/** Most segments in one measurement (directions × speeds; a station uses a handful). */
export const MAX_SEGMENTS = 16;
/** Most entries in one list of edges or crossings (a 2 MB body holds about 50,000). */
export const MAX_LIST_ENTRIES = 100_000;

/**
 * Refuses an over-long list before any of its entries is read, with one issue: a hostile body of
 * empty entries would otherwise make several issues per entry.
 */
function boundedList<T extends z.ZodType>(max: number, what: string, list: T) {
  return z.preprocess((value, ctx) => {
    if (Array.isArray(value) && value.length > max) {
      ctx.addIssue({
        code: 'custom',
        message: `has ${value.length} ${what}; at most ${max} are accepted`,
        input: value,
      });
    }
    return value;
  }, list);
}

/** Times in a list must not decrease; the refinement sits on each list so it runs even when a sibling list is bad. */
function sortedByTime<T extends z.ZodType<{ us: number }>>(item: T, minimum: number, tooFew: string) {
  return z
    .array(item)
    .min(minimum, tooFew)
    .superRefine((items, ctx) => {
      for (let i = 1; i < items.length; i++) {
        if (items[i].us < items[i - 1].us) {
          ctx.addIssue({
            code: 'custom',
            path: [i, 'us'],
            message: `times must not decrease (${items[i].us} µs comes after ${items[i - 1].us} µs)`,
          });
          return;
        }
      }
    });
}

export const measurementSegmentSchema = z.object({
  direction: directionSchema,
  /** Hall edges of all three sensors, merged and sorted by time (non-decreasing). */
  hallEdges: boundedList(
    MAX_LIST_ENTRIES,
    'hall edges',
    sortedByTime(hallEdgeSchema, 1, 'needs at least one hall edge'),
  ),
  /** Back-EMF zero crossings of all channels, merged and sorted by time (non-decreasing). */
  bemfCrossings: boundedList(
    MAX_LIST_ENTRIES,
    'back-EMF crossings',
    sortedByTime(bemfCrossingSchema, 4, 'needs at least four back-EMF crossings to fit the angle'),
  ),
  /** Optional free label from the station, e.g. "fwd-3000rpm". */
  label: stationText(200).optional(),
});
export type MeasurementSegment = z.infer<typeof measurementSegmentSchema>;

export const measurementSchema = z.object({
  /** Chosen by the station; the idempotency key of the upload. */
  measurementId: measurementIdSchema,
  /** Unit serial as scanned; checked and normalised by the product's one serial rule. */
  serial: serialSchema,
  /** One or more segments: directions and speeds may differ between segments. */
  segments: boundedList(
    MAX_SEGMENTS,
    'segments',
    z.array(measurementSegmentSchema).min(1, 'needs at least one segment'),
  ),
  /** ISO 8601 time the capture was taken, when the station knows it. */
  capturedAt: stationText(40).optional(),
  /** Free-form station identifier. */
  stationId: stationText(200).optional(),
});
export type Measurement = z.infer<typeof measurementSchema>;
