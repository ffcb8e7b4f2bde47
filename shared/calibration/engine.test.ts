import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Measurement } from '../schemas/measurement';
import type { Recipe } from '../schemas/recipe';
import { calibrationResultSchema } from '../schemas/calibration-result';
import { createRng } from '../simulation/rng';
import { simulateMeasurement, type SimulationSpec } from '../simulation/simulate';
import { wrapDeg180 } from './angles';
import { calibrate, ENGINE_VERSION, offsetToCounts } from './engine';

// Ground truth comes from shared/simulation, a physical generator that shares no code with the engine:
// crossing angles follow from the winding flux λx = ψ·cos(θ − φx) (textbook machine theory, e.g. Krause et
// al., Analysis of Electric Machinery and Drive Systems), hall edges from the hall model of the domain notes.
// Test layouts (0/120/240°, 0/60/120°) and limits are chosen for the tests: common practice, no source.
const LAYOUT_120 = { A: 0, B: 120, C: 240 };
const LAYOUT_60 = { A: 0, B: 60, C: 120 };

function recipeFor(spec: Partial<Recipe> = {}): Recipe {
  return {
    polePairs: 4,
    hallRiseDeg: LAYOUT_120,
    bemfDelayUs: 0,
    debounceUs: 1,
    countsPerTurn: 65536,
    countsSigned: true,
    maxAttempts: 3,
    limits: { offsetDeg: [-30, 30], edgeResidualDeg: 2, speedRpm: [200, 20000], minElectricalRevs: 10 },
    ...spec,
  };
}

function sim(spec: Partial<SimulationSpec>, seed = 1) {
  return simulateMeasurement(
    {
      polePairs: 4,
      hallRiseDeg: LAYOUT_120,
      offsetDeg: 5,
      segments: [
        { direction: 'forward', profile: { kind: 'constant', speedRpm: 3000 }, electricalTurns: 40 },
      ],
      ...spec,
    },
    createRng(seed),
  );
}

const err = (a: number | null, b: number) => Math.abs(wrapDeg180((a ?? NaN) - b));

describe('calibrate: the offset', () => {
  it('recovers the offset at constant speed with 1 µs jitter', () => {
    const { measurement, truth } = sim({ jitterUs: 1, offsetDeg: -12.5 });
    const result = calibrate(measurement, recipeFor());
    expect(err(result.offsetDeg, truth.segments[0].offsetDeg)).toBeLessThan(0.03);
    expect(result.verdict).toBe('pass');
    expect(result.engineVersion).toBe(ENGINE_VERSION);
    expect(calibrationResultSchema.safeParse(result).success).toBe(true);
  });

  it('recovers the offset while coasting down from 6000 to 2000 rpm', () => {
    const { measurement, truth } = sim({
      jitterUs: 1,
      segments: [
        {
          direction: 'forward',
          profile: { kind: 'coast', startRpm: 6000, endRpm: 2000 },
          electricalTurns: 60,
        },
      ],
    });
    const result = calibrate(measurement, recipeFor());
    expect(err(result.offsetDeg, truth.segments[0].offsetDeg)).toBeLessThan(0.03);
    expect(result.segments[0].speedStartRpm).toBeGreaterThan(5500);
    expect(result.segments[0].speedEndRpm).toBeLessThan(2500);
    expect(result.speedVariationPct).toBeGreaterThan(100);
  });

  it('recovers the offset on an accelerating ramp where one straight line would be several degrees off', () => {
    const { measurement, truth } = sim({
      segments: [
        {
          direction: 'forward',
          profile: { kind: 'ramp', startRpm: 1000, endRpm: 4000 },
          electricalTurns: 40,
        },
      ],
    });
    const local = calibrate(measurement, recipeFor());
    const line = calibrate(measurement, recipeFor(), { angleFit: { globalLine: true } });
    expect(err(local.offsetDeg, truth.segments[0].offsetDeg)).toBeLessThan(0.01);
    expect(err(line.offsetDeg, truth.segments[0].offsetDeg)).toBeGreaterThan(1);
  });

  it('removes the detector delay and tolerates dropped crossings, including whole missing turns', () => {
    const { measurement, truth } = sim({ bemfDelayUs: 25, dropCrossingProbability: 0.3, channels: ['A'] });
    const result = calibrate(measurement, recipeFor({ bemfDelayUs: 25 }));
    expect(err(result.offsetDeg, truth.segments[0].offsetDeg)).toBeLessThan(0.01);
    const ignoringDelay = calibrate(measurement, recipeFor({ bemfDelayUs: 0 }));
    // 25 µs at 200 Hz electrical is 1.8°.
    expect(err(ignoringDelay.offsetDeg, truth.segments[0].offsetDeg)).toBeCloseTo(1.8, 1);
  });

  it('is not moved by sub-microsecond bounce pairs', () => {
    const { measurement } = sim({ jitterUs: 0.5 });
    const clean = calibrate(measurement, recipeFor());
    const bounced: Measurement = structuredClone(measurement);
    const seg = bounced.segments[0];
    seg.hallEdges = seg.hallEdges
      .flatMap((e, i) =>
        i % 3 === 0
          ? [
              e,
              { ...e, edge: e.edge === 'rise' ? ('fall' as const) : ('rise' as const), us: e.us + 0.3 },
              { ...e, us: e.us + 0.6 },
            ]
          : [e],
      )
      .sort((a, b) => a.us - b.us);
    const result = calibrate(bounced, recipeFor());
    expect(result.offsetDeg).toBe(clean.offsetDeg);
    expect(result.sensors.reduce((a, s) => a + s.bounceEdges, 0)).toBeGreaterThan(0);
  });

  it('works for a 60° layout and line-to-line channels', () => {
    const { measurement, truth } = sim({
      hallRiseDeg: LAYOUT_60,
      channels: ['AB', 'BC', 'CA'],
      offsetDeg: 40,
    });
    const result = calibrate(
      measurement,
      recipeFor({ hallRiseDeg: LAYOUT_60, limits: { ...recipeFor().limits, offsetDeg: [0, 60] } }),
    );
    expect(err(result.offsetDeg, truth.segments[0].offsetDeg)).toBeLessThan(0.005);
    expect(result.checks.find((c) => c.code === 'hall.valid_states')?.passed).toBe(true);
    expect(result.validStates).toContain('111');
  });

  it('separates the geometric offset from the lag with forward and reverse segments', () => {
    const { measurement, truth } = sim({
      hysteresisDeg: 0.8,
      segments: [
        { direction: 'forward', profile: { kind: 'constant', speedRpm: 3000 }, electricalTurns: 30 },
        { direction: 'reverse', profile: { kind: 'constant', speedRpm: 3000 }, electricalTurns: 30 },
      ],
    });
    const result = calibrate(measurement, recipeFor());
    expect(err(result.offsetDeg, truth.offsetDeg)).toBeLessThan(0.005);
    expect(result.lagDeg).toBeCloseTo(0.8, 3);
    expect(result.segments[0].offsetDeg! - result.segments[1].offsetDeg!).toBeCloseTo(1.6, 3);
    expect(result.hysteresisDeg).toBeNull();
  });

  it('splits the lag into hysteresis and latency with segments at two speeds', () => {
    const seg = (direction: 'forward' | 'reverse', speedRpm: number) => ({
      direction,
      profile: { kind: 'constant' as const, speedRpm },
      electricalTurns: 30,
    });
    const { measurement, truth } = sim({
      hysteresisDeg: 0.6,
      latencyUs: 4,
      segments: [seg('forward', 1000), seg('reverse', 1000), seg('forward', 6000), seg('reverse', 6000)],
    });
    const result = calibrate(measurement, recipeFor());
    expect(result.hysteresisDeg).toBeCloseTo(0.6, 2);
    expect(result.latencyUs).toBeCloseTo(4, 1);
    expect(err(result.offsetDeg, truth.offsetDeg)).toBeLessThan(0.01);
  });

  it('reports per-edge residuals, sensor placement, spacing and duty', () => {
    const { measurement } = sim({
      sensorErrorDeg: { A: 1, B: -1 },
      riseErrorDeg: { C: 2 },
      offsetDeg: 0,
    });
    const result = calibrate(measurement, recipeFor());
    // Six types: A +1, A +1, B −1, B −1, C +2 (rise), C 0 (fall): mean 1/3.
    const mean = 1 / 3;
    expect(result.offsetDeg).toBeCloseTo(mean, 3);
    const res = Object.fromEntries(result.edges.map((e) => [`${e.sensor}${e.edge}`, e.residualDeg]));
    expect(res.Arise).toBeCloseTo(1 - mean, 3);
    expect(res.Bfall).toBeCloseTo(-1 - mean, 3);
    expect(res.Crise).toBeCloseTo(2 - mean, 3);
    expect(res.Cfall).toBeCloseTo(-mean, 3);
    const ab = result.spacing.find((s) => s.from === 'A' && s.to === 'B')!;
    expect(ab.nominalDeg).toBe(120);
    expect(ab.measuredDeg).toBeCloseTo(118, 3);
    // C rises 2° late turning forward, so it is high 2° less of a turn.
    expect(result.sensors[2].dutyPct).toBeCloseTo((100 * 178) / 360, 2);
    expect(result.sensors[0].dutyPct).toBeCloseTo(50, 3);
  });

  it('shows the magnetisation spread per pole pair', () => {
    // Edges at 30° + k·60° stay clear of the turn boundary that groups them.
    const hallRiseDeg = { A: 30, B: 150, C: 270 };
    const { measurement, truth } = sim({
      polePairs: 3,
      hallRiseDeg,
      polePairErrorDeg: [1, -1, 0],
      offsetDeg: 0,
      segments: [
        { direction: 'forward', profile: { kind: 'constant', speedRpm: 2000 }, electricalTurns: 30 },
      ],
    });
    const result = calibrate(measurement, recipeFor({ polePairs: 3, hallRiseDeg }));
    expect(result.segments[0].polePairOffsetsDeg).toHaveLength(3);
    expect(result.polePairSpreadDeg).toBeCloseTo(2, 2);
    expect(err(result.offsetDeg, truth.segments[0].offsetDeg)).toBeLessThan(0.01);
  });

  it('gives the drive figures for the uncorrected offset', () => {
    const { measurement } = sim({ offsetDeg: 20 });
    const result = calibrate(measurement, recipeFor());
    expect(result.drive?.torqueFactor).toBeCloseTo(Math.cos((20 * Math.PI) / 180), 4);
    expect(result.drive?.dAxisShare).toBeCloseTo(Math.sin((20 * Math.PI) / 180), 4);
    expect(result.drive?.sixStepMeanTorqueRatio).toBeCloseTo(Math.cos((20 * Math.PI) / 180), 4);
    expect(result.drive!.sixStepRippleMeasuredPct).toBeGreaterThan(result.drive!.sixStepRippleIdealPct);
  });
});

describe('calibrate: checks and verdict', () => {
  const check = (r: ReturnType<typeof calibrate>, code: string) => r.checks.find((c) => c.code === code)!;

  it('fails the phase sequence when B and C are swapped in the winding', () => {
    const r = calibrate(sim({ miswiredBC: true }).measurement, recipeFor());
    expect(check(r, 'bemf.phase_sequence').passed).toBe(false);
    expect(check(r, 'bemf.phase_sequence').message).toMatch(/B and C/);
    expect(r.verdict).toBe('fail');
  });

  it('fails when a hall sensor never switches', () => {
    const r = calibrate(sim({ deadSensor: 'B' }).measurement, recipeFor());
    expect(check(r, 'hall.all_switching').passed).toBe(false);
    expect(check(r, 'hall.all_switching').message).toMatch(/sensor B/);
    expect(r.verdict).toBe('fail');
  });

  it('fails when the rotor turned against the declared direction', () => {
    const { measurement } = sim({
      segments: [
        { direction: 'reverse', profile: { kind: 'constant', speedRpm: 3000 }, electricalTurns: 30 },
      ],
    });
    measurement.segments[0].direction = 'forward';
    const r = calibrate(measurement, recipeFor());
    expect(check(r, 'direction.as_declared').passed).toBe(false);
    expect(check(r, 'bemf.phase_sequence').passed).toBe(true);
  });

  it('fails invalid hall states when the recipe layout does not match the board', () => {
    const r = calibrate(sim({ hallRiseDeg: LAYOUT_60 }).measurement, recipeFor());
    expect(check(r, 'hall.valid_states').passed).toBe(false);
  });

  it('fails the offset window, the residual spread, the speed window and too few turns', () => {
    const { measurement } = sim({
      offsetDeg: 45,
      sensorErrorDeg: { A: 4 },
      segments: [{ direction: 'forward', profile: { kind: 'constant', speedRpm: 3000 }, electricalTurns: 8 }],
    });
    const r = calibrate(
      measurement,
      recipeFor({
        limits: { offsetDeg: [-30, 30], edgeResidualDeg: 2, speedRpm: [500, 2000], minElectricalRevs: 10 },
      }),
    );
    for (const code of [
      'offset.within_limits',
      'edges.residual_spread',
      'speed.within_window',
      'turns.enough',
    ]) {
      expect(check(r, code).passed, code).toBe(false);
    }
    expect(check(r, 'speed.within_window').value).toBeCloseTo(3000, 0);
    expect(r.verdict).toBe('fail');
  });

  it('applies the optional fit-residual and speed-variation limits', () => {
    const { measurement } = sim({
      jitterUs: 3,
      segments: [
        {
          direction: 'forward',
          profile: { kind: 'coast', startRpm: 3000, endRpm: 2000 },
          electricalTurns: 30,
        },
      ],
    });
    const r = calibrate(
      measurement,
      recipeFor({ limits: { ...recipeFor().limits, fitResidualDeg: 0.01, speedVariationPct: 10 } }),
    );
    expect(check(r, 'fit.residual').passed).toBe(false);
    expect(check(r, 'speed.variation').passed).toBe(false);
  });
});

describe('offset in firmware counts', () => {
  it('rounds half away from zero and wraps signed and unsigned counts', () => {
    expect(offsetToCounts(5.5, 360, true)).toBe(6);
    expect(offsetToCounts(-5.5, 360, true)).toBe(-6);
    expect(offsetToCounts(-5.5, 360, false)).toBe(354);
    expect(offsetToCounts(180, 65536, true)).toBe(-32768);
    expect(offsetToCounts(180, 65536, false)).toBe(32768);
    expect(offsetToCounts(10, 65536, true)).toBe(1820);
  });
});

describe('calibrate: offset recovery for any layout, offset and direction (property)', () => {
  it('recovers the offset within 0.05° for random layouts, offsets, directions and pole pairs', () => {
    fc.assert(
      fc.property(
        fc.record({
          base: fc.double({ min: 0, max: 360, noNaN: true }),
          sixty: fc.boolean(),
          perm: fc.constantFrom([0, 1, 2], [0, 2, 1], [1, 0, 2], [1, 2, 0], [2, 0, 1], [2, 1, 0]),
          offset: fc.double({ min: -179, max: 179, noNaN: true }),
          reverse: fc.boolean(),
          polePairs: fc.integer({ min: 1, max: 12 }),
          coast: fc.boolean(),
          seed: fc.integer({ min: 1, max: 1e6 }),
        }),
        (p) => {
          const step = p.sixty ? 60 : 120;
          const angles = p.perm.map((k) => p.base + k * step);
          const hallRiseDeg = { A: angles[0], B: angles[1], C: angles[2] };
          const direction = p.reverse ? ('reverse' as const) : ('forward' as const);
          const profile = p.coast
            ? ({ kind: 'coast', startRpm: 2000, endRpm: 1200 } as const)
            : ({ kind: 'constant', speedRpm: 1500 } as const);
          const { measurement, truth } = simulateMeasurement(
            {
              polePairs: p.polePairs,
              hallRiseDeg,
              offsetDeg: p.offset,
              jitterUs: 0.5,
              segments: [{ direction, profile, electricalTurns: 20 }],
            },
            createRng(p.seed),
          );
          const r = calibrate(measurement, recipeFor({ polePairs: p.polePairs, hallRiseDeg }));
          expect(err(r.offsetDeg, truth.segments[0].offsetDeg)).toBeLessThan(0.05);
          expect(r.checks.find((c) => c.code === 'hall.valid_states')?.passed).toBe(true);
          expect(r.segments[0].hallDirection).toBe(direction);
        },
      ),
      { numRuns: 60, seed: 20261202 },
    );
  });
});
