import { describe, expect, it } from 'vitest';
import { checkCodeSchema, type Check } from '../schemas/calibration-result';
import { createRng, exampleRecipe, simulateMeasurement } from '../simulation';
import type { SimulationSpec } from '../simulation/simulate';
import {
  CHECK_GUIDE,
  checkName,
  failureStep,
  formatCheckLimit,
  formatCheckValue,
  remedyOf,
} from './check-guide';
import { calibrate } from './engine';

const recipe = exampleRecipe();

function measure(extra: Partial<SimulationSpec> = {}) {
  const spec: SimulationSpec = {
    polePairs: recipe.polePairs,
    hallRiseDeg: recipe.hallRiseDeg,
    offsetDeg: 4,
    jitterUs: 0.5,
    bemfDelayUs: recipe.bemfDelayUs,
    channels: ['A', 'B', 'C'],
    segments: [
      { direction: 'forward', profile: { kind: 'coast', startRpm: 3000, endRpm: 2400 }, electricalTurns: 40 },
    ],
    ...extra,
  };
  return calibrate(simulateMeasurement(spec, createRng(7)).measurement, recipe);
}

const check = (over: Partial<Check> & Pick<Check, 'code'>): Check => ({
  passed: false,
  value: null,
  limit: null,
  unit: '',
  message: '',
  ...over,
});

describe('the check guide (one table for screen and traveler)', () => {
  it('names every check code the engine can give in plain words, never by its dotted code', () => {
    for (const code of checkCodeSchema.options) {
      const guide = CHECK_GUIDE[code];
      expect(guide, code).toBeDefined();
      expect(guide.name).not.toMatch(/[._]/);
      expect(checkName(code)).toBe(guide.name);
      expect(guide.action.length).toBeGreaterThan(10);
    }
  });

  it("every passing check's value sits on the allowed side of its limit, in the direction the table prints", () => {
    // Ground truth: the engine's own pass decision on a healthy simulated unit (independent simulator).
    const result = measure();
    expect(result.verdict).toBe('pass');
    const single = result.checks.filter((c) => typeof c.limit === 'number' && typeof c.value === 'number');
    expect(single.map((c) => c.code)).toEqual(
      expect.arrayContaining(['hall.all_switching', 'turns.enough', 'edges.residual_spread']),
    );
    for (const c of single) {
      const value = c.value as number;
      const limit = c.limit as number;
      const printed = formatCheckLimit(c);
      if (CHECK_GUIDE[c.code].direction === 'min') {
        expect(value, c.code).toBeGreaterThanOrEqual(limit);
        expect(printed, c.code).toMatch(/^≥ /);
      } else {
        expect(value, c.code).toBeLessThanOrEqual(limit);
        expect(printed, c.code).toMatch(/^≤ /);
      }
    }
  });

  it('prints minimums with ≥, maximums with ≤ and windows as a range, each with its unit', () => {
    expect(formatCheckLimit(check({ code: 'hall.all_switching', limit: 50, unit: '%' }))).toBe('≥ 50 %');
    expect(formatCheckLimit(check({ code: 'turns.enough', limit: 10, unit: 'turns' }))).toBe('≥ 10 turns');
    expect(formatCheckLimit(check({ code: 'edges.residual_spread', limit: 2, unit: 'deg' }))).toBe('≤ 2°');
    expect(formatCheckLimit(check({ code: 'offset.within_limits', limit: [-15, 15], unit: 'deg' }))).toBe(
      '\u221215 to 15°',
    );
    expect(formatCheckValue(check({ code: 'turns.enough', value: 13.834, unit: 'turns' }))).toBe(
      '13.83 turns',
    );
  });

  it('sends a dead hall sensor to repair at once, not to a retest', () => {
    const result = measure({ deadSensor: 'B' });
    expect(result.verdict).toBe('fail');
    const step = failureStep(result.checks);
    expect(step?.remedy).toBe('repair');
    expect(step?.action).toMatch(/^Do not retest/);
  });

  it('sends swapped phases to repair at once', () => {
    const result = measure({ miswiredBC: true });
    expect(result.checks.find((c) => c.code === 'bemf.phase_sequence')?.passed).toBe(false);
    expect(failureStep(result.checks)?.remedy).toBe('repair');
  });

  it('retests an offset just outside its window but repairs one far outside it', () => {
    const near = check({ code: 'offset.within_limits', value: 17, limit: [-15, 15], unit: 'deg' });
    const far = check({ code: 'offset.within_limits', value: 25, limit: [-15, 15], unit: 'deg' });
    expect(remedyOf(near)).toBe('retest');
    expect(remedyOf(far)).toBe('repair');
    expect(failureStep([far])?.action).toMatch(/far outside/);
    // Measured by the engine: a magnet ring 25° off.
    const measured = measure({ offsetDeg: 25 });
    expect(failureStep(measured.checks)?.remedy).toBe('repair');
  });

  it('retests where another spin can pass: too few turns, speed out of window', () => {
    expect(failureStep([check({ code: 'turns.enough', value: 8, limit: 10 })])?.remedy).toBe('retest');
    expect(
      failureStep([check({ code: 'speed.within_window', value: 900, limit: [1000, 4000] })])?.remedy,
    ).toBe('retest');
    expect(failureStep([check({ code: 'direction.as_declared', value: 'segment 1' })])?.remedy).toBe(
      'station',
    );
  });

  it('lets the check needing the most decide when several failed', () => {
    const step = failureStep([
      check({ code: 'turns.enough', value: 8, limit: 10 }),
      check({ code: 'hall.all_switching', value: 0, limit: 50 }),
    ]);
    expect(step?.check.code).toBe('hall.all_switching');
    expect(failureStep([check({ code: 'turns.enough', passed: true })])).toBeNull();
  });
});
