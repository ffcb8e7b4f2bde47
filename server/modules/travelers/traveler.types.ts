import { z } from 'zod';
import { serialSchema } from '#shared/schemas/serial';

// Everything the unit traveler prints, and nothing else. Self-contained on purpose: the job that renders
// a traveler maps the committed calibration, the unit and the station into this shape, so the renderer
// never depends on how those are stored.

// Serials and lots are printed in Code 128 and inside the Data Matrix text, so they stay within printable
// ASCII and never contain the field separators of the Data Matrix format ('|', '=').
const CODE_TEXT = /^[A-Za-z0-9][A-Za-z0-9 ._\-/#+:]*$/;

const text = (max: number) => z.string().trim().min(1).max(max);
const codeText = (what: string, max: number) =>
  z
    .string()
    .trim()
    .min(1, `${what} is empty`)
    .max(max, `${what} is longer than ${max} characters`)
    .regex(CODE_TEXT, `${what} may hold only letters, digits, spaces and . _ - / # + :`);

const isoTime = z.iso.datetime({ offset: true, message: 'expected an ISO 8601 date-time with a zone' });

// Building a DateTimeFormat is slow next to a render, and a plant uses one or two zones: remember answers.
const knownZones = new Map<string, boolean>();
function isTimeZone(zone: string): boolean {
  let ok = knownZones.get(zone);
  if (ok === undefined) {
    try {
      new Intl.DateTimeFormat('en-GB', { timeZone: zone });
      ok = true;
    } catch {
      ok = false;
    }
    if (knownZones.size < 100) knownZones.set(zone, ok);
  }
  return ok;
}

export const SENSORS = ['A', 'B', 'C'] as const;
export const EDGES = ['rise', 'fall'] as const;

export const edgeResidualSchema = z.object({
  sensor: z.enum(SENSORS),
  edge: z.enum(EDGES),
  residualDeg: z.number().finite(),
});

export const travelerCheckSchema = z.object({
  code: text(60),
  passed: z.boolean(),
  value: z.union([z.number().finite(), z.string().max(60)]).nullable(),
  // A single bound, a [min, max] window, or a phrase ("every sensor switches").
  limit: z
    .union([z.number().finite(), z.tuple([z.number().finite(), z.number().finite()]), z.string().max(60)])
    .nullable(),
  unit: z.string().max(16).optional(),
  sentence: text(240),
});

// What the station reported after writing the offset into the unit's memory. Counts are firmware counts.
export const programmingSchema = z.discriminatedUnion('status', [
  z.object({ status: z.literal('pending') }),
  z.object({
    status: z.literal('confirmed'),
    writtenCounts: z.number().int(),
    readBackCounts: z.number().int(),
    checksum: text(32),
    confirmedAt: isoTime,
  }),
  z.object({
    status: z.literal('mismatch'),
    writtenCounts: z.number().int(),
    readBackCounts: z.number().int(),
    checksum: text(32).optional(),
    confirmedAt: isoTime,
  }),
]);

export const travelerDataSchema = z
  .object({
    companyName: text(80),
    plantName: text(80),
    lineName: text(40).optional(),
    serial: serialSchema,
    model: z.object({ name: text(60), polePairs: z.number().int().min(1).max(64) }),
    lots: z.object({
      hallBoard: codeText('hall board lot', 40),
      magnetRing: codeText('magnet ring lot', 40),
      stator: codeText('stator lot', 40),
    }),
    verdict: z.enum(['pass', 'fail']),
    // Electrical degrees, wrapped to (−180, 180]; printed with 2 decimals.
    offsetDeg: z.number().finite().gt(-180).lte(180),
    // The same offset in firmware counts of one electrical turn (signed).
    offsetCounts: z.number().int(),
    countsPerTurn: z
      .number()
      .int()
      .min(2)
      .max(2 ** 32),
    lagDeg: z.number().finite().optional(),
    edges: z.array(edgeResidualSchema).length(6),
    speedRpm: z.number().finite().nonnegative(),
    electricalTurns: z.number().finite().nonnegative(),
    checks: z.array(travelerCheckSchema).min(1).max(24),
    stationName: text(60),
    operatorName: text(80),
    measuredAt: isoTime,
    computedAt: isoTime,
    // When this PDF was generated; also its CreationDate, so the same data gives the same bytes.
    generatedAt: isoTime,
    // IANA zone every time is printed in; the page states it.
    timeZone: z
      .string()
      .default('UTC')
      .refine(isTimeZone, { message: 'unknown time zone (expected an IANA name such as Europe/Berlin)' }),
    recipe: z.object({ name: codeText('recipe name', 60), version: z.number().int().min(1) }),
    engineVersion: text(40),
    programming: programmingSchema,
    // Set while the unit is on hold: the traveler then says ON HOLD, with the reason, above everything.
    hold: z.object({ reason: text(240) }).optional(),
    // 1 for the original print, n for the (n − 1)th reprint.
    printNumber: z.number().int().min(1).default(1),
    pageSize: z.enum(['A4', 'LETTER']).default('A4'),
  })
  .superRefine((data, ctx) => {
    const seen = new Set(data.edges.map((e) => `${e.sensor}-${e.edge}`));
    if (seen.size !== 6) {
      ctx.addIssue({
        code: 'custom',
        path: ['edges'],
        message: 'edges must hold each of A/B/C × rise/fall exactly once',
      });
    }
    // The degrees and the counts must describe the same angle (modulo one turn): offsetDeg is rounded to
    // 0.01°, so allow that rounding plus one count.
    const expected = (data.offsetDeg / 360) * data.countsPerTurn;
    const turn = data.countsPerTurn;
    const diff = Math.abs(((((data.offsetCounts - expected) % turn) + turn * 1.5) % turn) - turn / 2);
    if (diff > 1 + (0.005 / 360) * turn) {
      ctx.addIssue({
        code: 'custom',
        path: ['offsetCounts'],
        message: `offsetCounts ${data.offsetCounts} does not match offsetDeg ${data.offsetDeg} at ${turn} counts per turn (expected about ${Math.round(expected)})`,
      });
    }
  });

export type TravelerData = z.output<typeof travelerDataSchema>;
export type TravelerDataInput = z.input<typeof travelerDataSchema>;
export type TravelerCheck = z.output<typeof travelerCheckSchema>;
export type ProgrammingConfirmation = z.output<typeof programmingSchema>;

export class TravelerDataError extends Error {
  readonly code = 'travelers.invalid_data';
  constructor(readonly issues: z.core.$ZodIssue[]) {
    super(
      `Traveler data is invalid: ${issues.map((i) => `${i.path.join('.') || '(root)'}: ${i.message}`).join('; ')}`,
    );
    this.name = 'TravelerDataError';
  }
}

export function parseTravelerData(input: unknown): TravelerData {
  const result = travelerDataSchema.safeParse(input);
  if (!result.success) throw new TravelerDataError(result.error.issues);
  return result.data;
}
