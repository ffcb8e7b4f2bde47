import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { measurementSchema } from '../schemas/measurement';
import { createRng } from '../simulation/rng';
import { simulateMeasurement } from '../simulation/simulate';
import { calibrate } from './engine';
import { CalibrationInputError, isWellFormedMeasurement, validateCalibrationInput } from './input';

const recipe = {
  polePairs: 2,
  hallRiseDeg: { A: 0, B: 120, C: 240 },
  bemfDelayUs: 0,
  debounceUs: 1,
  countsPerTurn: 4096,
  countsSigned: false,
  maxAttempts: 3,
  limits: { offsetDeg: [-20, 20], edgeResidualDeg: 2, speedRpm: [100, 10000], minElectricalRevs: 5 },
};

const good = () =>
  simulateMeasurement(
    {
      polePairs: 2,
      hallRiseDeg: recipe.hallRiseDeg,
      offsetDeg: 3,
      segments: [
        { direction: 'forward', profile: { kind: 'constant', speedRpm: 1200 }, electricalTurns: 10 },
      ],
    },
    createRng(7),
  ).measurement as unknown as Record<string, unknown> & { segments: Record<string, unknown[]>[] };

function issuesOf(measurement: unknown, r: unknown = recipe) {
  try {
    calibrate(measurement as never, r as never);
  } catch (e) {
    expect(e).toBeInstanceOf(CalibrationInputError);
    const error = e as CalibrationInputError;
    expect(error.code).toBe('calibration.invalid_input');
    const outcome = validateCalibrationInput(measurement, r);
    expect(outcome.ok).toBe(false);
    if (!outcome.ok) expect(outcome.issues).toEqual(error.issues);
    return error.issues;
  }
  throw new Error('calibrate accepted unusable input');
}

describe('unusable input is rejected with every problem and its path', () => {
  it('accepts a good measurement without throwing', () => {
    const outcome = validateCalibrationInput(good(), recipe);
    expect(outcome.ok).toBe(true);
  });

  it('rejects times that go backwards', () => {
    const m = good();
    const edges = m.segments[0].hallEdges as { us: number }[];
    edges[5].us = edges[3].us - 10;
    expect(issuesOf(m)).toContainEqual(
      expect.objectContaining({ path: 'measurement.segments[0].hallEdges[5].us' }),
    );
  });

  it('rejects non-finite times', () => {
    const m = good();
    (m.segments[0].bemfCrossings as { us: number }[])[2].us = NaN;
    (m.segments[0].hallEdges as { us: number }[])[1].us = Infinity;
    const paths = issuesOf(m).map((i) => i.path);
    expect(paths).toContain('measurement.segments[0].bemfCrossings[2].us');
    expect(paths).toContain('measurement.segments[0].hallEdges[1].us');
  });

  it('rejects empty lists', () => {
    const m = good();
    m.segments[0].hallEdges = [];
    expect(issuesOf(m).map((i) => i.path)).toContain('measurement.segments[0].hallEdges');
    expect(issuesOf({ ...good(), segments: [] }).map((i) => i.path)).toContain('measurement.segments');
  });

  it('rejects an unknown channel or sensor', () => {
    const m = good();
    (m.segments[0].bemfCrossings as { channel: string }[])[0].channel = 'AC';
    (m.segments[0].hallEdges as { sensor: string }[])[0].sensor = 'D';
    const paths = issuesOf(m).map((i) => i.path);
    expect(paths).toContain('measurement.segments[0].bemfCrossings[0].channel');
    expect(paths).toContain('measurement.segments[0].hallEdges[0].sensor');
  });

  it('rejects a recipe missing a field and reports measurement problems in the same error', () => {
    const { bemfDelayUs: _unused, ...partial } = recipe;
    const m = good();
    delete m.serial;
    const paths = issuesOf(m, { ...partial, limits: { ...recipe.limits, offsetDeg: [10, -10] } }).map(
      (i) => i.path,
    );
    expect(paths).toEqual(
      expect.arrayContaining(['measurement.serial', 'recipe.bemfDelayUs', 'recipe.limits.offsetDeg']),
    );
  });

  it('rejects a hall layout that cannot give six sectors', () => {
    const issues = issuesOf(good(), { ...recipe, hallRiseDeg: { A: 0, B: 0, C: 240 } });
    expect(issues.map((i) => i.path)).toContain('recipe.hallRiseDeg');
  });

  it('rejects input that is not an object at all', () => {
    expect(issuesOf(null, null).map((i) => i.path)).toEqual(['measurement', 'recipe']);
  });

  it('rejects a segment whose crossings all land at one instant', () => {
    const m = good();
    m.segments[0].bemfCrossings = [0, 1, 2, 3].map(() => ({ channel: 'A', edge: 'rise', us: 10 }));
    expect(issuesOf(m).map((i) => i.path)).toContain('measurement.segments[0].bemfCrossings');
  });
});

describe('the quick well-formedness walk', () => {
  // Every mutation turns a good measurement into something the schema may or may not accept; the walk
  // must agree with the schema (zod) every time, since good input skips the schema parse.
  const mutations: ((
    m: Record<string, unknown> & { segments: Record<string, unknown[]>[] },
    i: number,
  ) => void)[] = [
    () => {},
    (m) => delete m.measurementId,
    (m) => (m.measurementId = ''),
    (m) => (m.serial = 'x'.repeat(201)),
    (m) => (m.serial = 42),
    (m) => (m.capturedAt = 5),
    (m) => (m.capturedAt = '2026-12-02T10:00:00Z'),
    (m) => (m.stationId = ''),
    (m) => (m.stationId = null),
    (m) => (m.extra = { anything: true }),
    (m) => (m.segments = []),
    (m) => (m.segments = {} as never),
    (m) => ((m.segments[0] as Record<string, unknown>).direction = 'sideways'),
    (m) => ((m.segments[0] as Record<string, unknown>).label = 'fwd'),
    (m) => ((m.segments[0] as Record<string, unknown>).label = 3),
    (m) => (m.segments[0].hallEdges = []),
    (m) => (m.segments[0].bemfCrossings = m.segments[0].bemfCrossings.slice(0, 3)),
    (m, i) =>
      ((m.segments[0].hallEdges[i % m.segments[0].hallEdges.length] as Record<string, unknown>).us = NaN),
    (m, i) =>
      ((m.segments[0].hallEdges[i % m.segments[0].hallEdges.length] as Record<string, unknown>).us =
        -Infinity),
    (m, i) =>
      ((m.segments[0].hallEdges[i % m.segments[0].hallEdges.length] as Record<string, unknown>).us = '5'),
    (m, i) => ((m.segments[0].bemfCrossings[1 + (i % 20)] as Record<string, unknown>).us = -1),
    (m, i) => ((m.segments[0].bemfCrossings[i % 20] as Record<string, unknown>).channel = 'AC'),
    (m, i) => ((m.segments[0].bemfCrossings[i % 20] as Record<string, unknown>).edge = 'up'),
    (m, i) => ((m.segments[0].hallEdges[i % 20] as Record<string, unknown>).sensor = 'a'),
    (m, i) => (m.segments[0].hallEdges[i % 20] = null as never),
    (m, i) => (m.segments[0].hallEdges[i % 20] = [] as never),
    (m) => (m.segments[0].hallEdges[1] = { ...(m.segments[0].hallEdges[0] as object) }),
  ];

  it('accepts exactly what the measurement schema accepts', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: mutations.length - 1 }),
        fc.integer({ min: 0, max: 1000 }),
        (k, i) => {
          const m = good();
          mutations[k](m, i);
          expect(isWellFormedMeasurement(m)).toBe(measurementSchema.safeParse(m).success);
        },
      ),
      { numRuns: 150 },
    );
    for (let k = 0; k < mutations.length; k++) {
      const m = good();
      mutations[k](m, k);
      expect(isWellFormedMeasurement(m), `mutation ${k}`).toBe(measurementSchema.safeParse(m).success);
    }
  });
});
