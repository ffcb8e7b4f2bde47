import { z } from 'zod';
import type { GaugeAnovaResult, GaugeRangeResult, GaugeReading } from '../statistics/gauge-study';
import { measurementSchema } from './measurement';
import { serialSchema } from './serial';

/** Values of pgEnum `qualification_verdict` (`recorded`: a reading without a certified value to judge). */
export const QUALIFICATION_VERDICTS = ['pass', 'fail', 'recorded'] as const;
/** Values of pgEnum `gauge_appraiser_kind`. */
export const GAUGE_APPRAISER_KINDS = ['station', 'operator'] as const;
/** Values of pgEnum `gauge_study_status`. */
export const GAUGE_STUDY_STATUSES = ['open', 'finished'] as const;

const offsetDeg = z
  .number('Enter the offset in degrees, e.g. 1.25.')
  .min(-180, 'An offset is between −180° and 180°.')
  .max(180, 'An offset is between −180° and 180°.');
const toleranceDeg = z
  .number('Enter the tolerance in degrees, e.g. 0.3.')
  .gt(0, 'The tolerance must be more than 0°.')
  .max(10, 'A tolerance above ± 10° would not qualify anything.');

export const createReferenceUnitSchema = z.object({
  serial: serialSchema,
  /** Omit to certify the unit later from repeated readings at a station. */
  certifiedOffsetDeg: offsetDeg.optional(),
  toleranceDeg,
});
export type CreateReferenceUnit = z.infer<typeof createReferenceUnitSchema>;

const certifyExclusion = z.object({
  readingId: z.uuid(),
  reason: z.string().trim().min(5, 'Say why the reading is left out (at least 5 characters).').max(300),
});

/**
 * Certifying a reference unit from repeated readings at one station: either the readings the engineer
 * chose (`readingIds`, with every reading left out named in `excluded` with a reason), or simply the
 * latest `readings` of them.
 */
export const certifyReferenceUnitSchema = z
  .object({
    stationId: z.uuid('Choose a station.'),
    readings: z
      .number()
      .int()
      .min(2, 'Use at least 2 readings.')
      .max(100, 'Use at most 100 readings.')
      .optional(),
    readingIds: z
      .array(z.uuid())
      .min(2, 'Choose at least 2 readings.')
      .max(100, 'Use at most 100 readings.')
      .optional(),
    excluded: z.array(certifyExclusion).max(100).default([]),
  })
  .refine((c) => (c.readings === undefined) !== (c.readingIds === undefined), {
    message: 'Either choose the readings or say how many of the latest to use, not both.',
    path: ['readingIds'],
  })
  .refine((c) => !c.excluded.some((x) => c.readingIds?.includes(x.readingId)), {
    message: 'A reading cannot be both chosen and left out.',
    path: ['excluded'],
  });
export type CertifyReferenceUnit = z.input<typeof certifyReferenceUnitSchema>;

const certifiedFromSchema = z.object({
  stationId: z.string(),
  n: z.number(),
  sdDeg: z.number(),
  expandedUncertaintyDeg: z.number(),
  /** The readings the value was taken from (absent on values certified before readings could be chosen). */
  readingIds: z.array(z.string()).optional(),
  excluded: z.array(z.object({ readingId: z.string(), reason: z.string() })).optional(),
});
export type CertifiedFrom = z.infer<typeof certifiedFromSchema>;

export const referenceUnitViewSchema = z.object({
  id: z.string(),
  serial: z.string(),
  unitId: z.string(),
  modelId: z.string(),
  modelCode: z.string(),
  certifiedOffsetDeg: z.number().nullable(),
  toleranceDeg: z.number(),
  certifiedFrom: certifiedFromSchema.nullable(),
  retiredAt: z.string().nullable(),
});
export type ReferenceUnitView = z.infer<typeof referenceUnitViewSchema>;

export const qualificationPolicySchema = z
  .object({
    atShiftStart: z.boolean(),
    everyHours: z
      .number('Enter the hours as a number, e.g. 8.')
      .gt(0, 'Hours must be more than 0.')
      .max(168, 'At most a week (168 h).')
      .nullable(),
    everyUnits: z
      .number('Enter a whole number of units, e.g. 500.')
      .int('Enter a whole number of units, e.g. 500.')
      .min(1, 'At least 1 unit.')
      .max(100000, 'At most 100,000 units.')
      .nullable(),
    referenceUnitIds: z.array(z.uuid()).min(1, 'Choose at least one reference unit.'),
  })
  .refine((p) => p.atShiftStart || p.everyHours !== null || p.everyUnits !== null, {
    message: 'Say when the station must be qualified: at shift start, every N hours or every N units.',
    path: ['atShiftStart'],
  });
export type QualificationPolicy = z.infer<typeof qualificationPolicySchema>;

export const plantShiftsSchema = z.object({
  shifts: z
    .array(
      z.object({
        name: z.string().trim().min(1, 'Name the shift.').max(40),
        /** "HH:MM", local plant time. */
        startsAt: z.string().regex(/^([01]\d|2[0-3]):[0-5]\d$/, 'Give the start as HH:MM, e.g. 06:00.'),
      }),
    )
    .max(12, 'At most 12 shifts.')
    .superRefine((shifts, ctx) => {
      // Two shifts starting at the same minute, or two of the same name, are a typing mistake.
      shifts.forEach((s, i) => {
        const earlier = shifts.slice(0, i);
        if (earlier.some((e) => e.startsAt === s.startsAt))
          ctx.addIssue({
            code: 'custom',
            path: [i, 'startsAt'],
            message: `Two shifts start at ${s.startsAt}: give each shift its own start.`,
          });
        if (earlier.some((e) => e.name.trim().toLowerCase() === s.name.trim().toLowerCase()))
          ctx.addIssue({
            code: 'custom',
            path: [i, 'name'],
            message: `Two shifts are named "${s.name.trim()}": give each its own name.`,
          });
      });
    }),
});
export type PlantShifts = z.infer<typeof plantShiftsSchema>;

export const overrideSchema = z.object({
  reason: z.string().trim().min(5, 'Give a reason of at least 5 characters.').max(500),
  minutes: z
    .number({ error: 'Enter the minutes, from 5 to 480.' })
    .int('Enter whole minutes.')
    .min(5, 'At least 5 minutes.')
    .max(480, 'At most 8 hours (480 minutes).'),
});

export const qualificationKindSchema = z.enum([
  'not_required',
  'qualified',
  'due_soon',
  'overdue',
  'failed',
  'override',
]);

export const qualificationStateSchema = z.object({
  stationId: z.string(),
  kind: qualificationKindSchema,
  locked: z.boolean(),
  validUntil: z.string().nullable(),
  unitsLeft: z.number().nullable(),
  sentence: z.string(),
  referenceSerials: z.array(z.string()),
  timeZone: z.string(),
  lastRun: z
    .object({
      id: z.string(),
      serial: z.string(),
      verdict: z.enum(QUALIFICATION_VERDICTS),
      offsetDeg: z.number(),
      deviationDeg: z.number().nullable(),
      toleranceDeg: z.number(),
      measuredAt: z.string(),
    })
    .nullable(),
});
export type QualificationState = z.infer<typeof qualificationStateSchema>;

export const qualificationRunViewSchema = z.object({
  id: z.string(),
  measurementId: z.string(),
  stationId: z.string(),
  stationName: z.string(),
  serial: z.string(),
  verdict: z.enum(QUALIFICATION_VERDICTS),
  offsetDeg: z.number(),
  certifiedOffsetDeg: z.number().nullable(),
  toleranceDeg: z.number(),
  deviationDeg: z.number().nullable(),
  measuredAt: z.string(),
});
export type QualificationRunView = z.infer<typeof qualificationRunViewSchema>;

export const biasQuerySchema = z.object({ limit: z.coerce.number().int().min(1).max(1000).default(200) });

export const gaugeStudyCreateSchema = z.object({
  name: z.string().trim().min(3, 'Name the study (at least 3 characters).').max(80),
  modelId: z.uuid('Choose a model.'),
  appraiserKind: z.enum(GAUGE_APPRAISER_KINDS),
  /** Station ids (appraiserKind station) or operator user ids (appraiserKind operator). */
  appraiserIds: z.array(z.uuid()).min(2, 'A study needs at least 2 appraisers.').max(10),
  /** The station where operators measure (appraiserKind operator). */
  stationId: z.uuid().optional(),
  partSerials: z.array(serialSchema).min(2, 'A study needs at least 2 parts.').max(25, 'At most 25 parts.'),
  trials: z
    .number('Enter a whole number of trials from 2 to 10.')
    .int('Enter a whole number of trials from 2 to 10.')
    .min(2, 'At least 2 trials.')
    .max(10, 'At most 10 trials.')
    .default(3),
  toleranceDeg: z
    .number('Enter the tolerance in degrees, e.g. 2.')
    .gt(0, 'The tolerance must be more than 0°.')
    .max(360, 'A tolerance is at most 360°.'),
  /** Seed of the randomised run order (so a study can be planned again identically); random when absent. */
  seed: z.number().int().optional(),
});
export type GaugeStudyCreate = z.infer<typeof gaugeStudyCreateSchema>;

/** A station's reading of a reference unit or a study part: the ordinary measurement contract. */
export const qualificationMeasurementSchema = measurementSchema;

export const studyMeasurementSchema = z.object({
  measurement: measurementSchema,
  /** Required when this part and trial was already measured (a spoiled trial measured again). */
  repeatReason: z.string().trim().min(5, 'Give a reason of at least 5 characters.').max(300).optional(),
  /** Which trial this is; the next one due for this part and appraiser when absent. */
  trial: z.number().int().min(1).optional(),
});

/** A gauge study as the server shows it (results once every trial is in). */
export interface GaugeStudyDetail {
  id: string;
  name: string;
  modelId: string;
  modelCode: string;
  appraiserKind: 'station' | 'operator';
  appraisers: { id: string; name: string }[];
  stationId: string | null;
  parts: string[];
  trials: number;
  toleranceDeg: number;
  status: (typeof GAUGE_STUDY_STATUSES)[number];
  createdAt: string;
  finishedAt: string | null;
  done: number;
  total: number;
  readings: {
    id: string;
    part: number;
    appraiser: number;
    trial: number;
    serial: string;
    offsetDeg: number;
    repeatReason: string | null;
    measuredAt: string;
  }[];
  results: {
    anova: GaugeAnovaResult;
    averageRange: GaugeRangeResult;
    reading: { reading: GaugeReading; sentence: string };
    readingOfTolerance: { reading: GaugeReading; sentence: string } | null;
    data: number[][][];
  } | null;
}

export interface GaugeStudySummary {
  id: string;
  name: string;
  modelId: string;
  appraiserKind: 'station' | 'operator';
  parts: number;
  appraisers: number;
  trials: number;
  toleranceDeg: number;
  status: (typeof GAUGE_STUDY_STATUSES)[number];
  createdAt: string;
  finishedAt: string | null;
}

export interface StudyNextStep {
  studyId: string;
  studyName: string;
  serial: string | null;
  part: number | null;
  trial: number | null;
  trials: number;
  doneByAppraiser: number;
  totalByAppraiser: number;
  done: number;
  total: number;
  appraiserLabel: string;
  /** Operator studies: the other appraisers who still have trials (whom to hand the station to next). */
  waitingFor: string[];
}
