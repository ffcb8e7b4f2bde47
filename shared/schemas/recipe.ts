import { z } from 'zod';

/**
 * The product recipe: what a unit of this type should look like and the limits it must meet.
 * Angles are electrical degrees, times microseconds, speeds mechanical rpm.
 */

const range = (what: string) =>
  z.tuple([z.number(), z.number()]).refine(([min, max]) => min <= max, {
    message: `${what}: the lowest value must not exceed the highest.`,
  });

export const recipeLimitsSchema = z.object({
  /** Accepted offset window [min, max] in electrical degrees, inside (−180, 180]. */
  offsetDeg: range('Offset window'),
  /** Largest accepted |residual| of any of the six edge types, electrical degrees. */
  edgeResidualDeg: z.number().positive(),
  /** Accepted mean mechanical speed of every segment [min, max], rpm. */
  speedRpm: range('Speed window').refine(([min]) => min > 0, {
    message: 'Speed window: the lowest speed must be more than 0 rpm.',
  }),
  /** Fewest electrical turns each segment must cover. */
  minElectricalRevs: z.number().positive(),
  /** Optional: largest RMS residual of the crossings about the angle fit, electrical degrees. */
  fitResidualDeg: z.number().positive().optional(),
  /** Optional: largest speed variation within a segment, % of its mean. */
  speedVariationPct: z.number().positive().optional(),
  /** Optional: accepted line-to-line back-EMF constant (fundamental peak) [min, max], V/krpm; sampled captures only. */
  keVPerKrpm: range('Back-EMF constant window').optional(),
});
export type RecipeLimits = z.infer<typeof recipeLimitsSchema>;

export const recipeSchema = z.object({
  /** Optional display name, e.g. "BL-57 24 V". */
  name: z.string().max(200).optional(),
  /** Pole pairs: electrical angle = polePairs × mechanical angle. */
  polePairs: z.number().int().min(1).max(64),
  /**
   * Nominal electrical angle at which each sensor goes high when turning forward (it goes low 180° later).
   * The valid hall states and their order are derived from these; 120° and 60° layouts both work.
   */
  hallRiseDeg: z.object({ A: z.number(), B: z.number(), C: z.number() }),
  /** Delay of the station's zero-crossing detector, µs; subtracted from every crossing time. */
  bemfDelayUs: z.number().min(0).max(1e6),
  /** Hall edges of one sensor closer together than this are bounce: the first edge of a burst counts. */
  debounceUs: z.number().min(0).max(1e6),
  /** Firmware counts per electrical turn, e.g. 65536. */
  countsPerTurn: z
    .number()
    .int()
    .min(2)
    .max(2 ** 32),
  /** Signed counts lie in [−countsPerTurn/2, countsPerTurn/2); unsigned in [0, countsPerTurn). */
  countsSigned: z.boolean(),
  /** How many measurement attempts the station may make before the unit is rejected. */
  maxAttempts: z.number().int().min(1).max(100),
  limits: recipeLimitsSchema,
});
export type Recipe = z.infer<typeof recipeSchema>;
