import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { calibrationResultSchema } from '../schemas/calibration-result';
import type { Recipe } from '../schemas/recipe';
import { calibrate } from './engine';
import { CalibrationInputError } from './input';

const recipe: Recipe = {
  polePairs: 3,
  hallRiseDeg: { A: 0, B: 120, C: 240 },
  bemfDelayUs: 2,
  debounceUs: 1,
  countsPerTurn: 4096,
  countsSigned: true,
  maxAttempts: 3,
  limits: { offsetDeg: [-10, 10], edgeResidualDeg: 2, speedRpm: [10, 100000], minElectricalRevs: 2 },
};

const sortedTimes = (min: number, max: number) =>
  fc
    .array(fc.double({ min: 0, max: 1e6, noNaN: true }), { minLength: min, maxLength: max })
    .map((v) => v.sort((a, b) => a - b));

const segment = fc.record({
  direction: fc.constantFrom('forward' as const, 'reverse' as const),
  hallEdges: fc
    .tuple(
      sortedTimes(1, 60),
      fc.array(
        fc.tuple(
          fc.constantFrom('A' as const, 'B' as const, 'C' as const),
          fc.constantFrom('rise' as const, 'fall' as const),
        ),
        { minLength: 60, maxLength: 60 },
      ),
    )
    .map(([times, kinds]) => times.map((us, i) => ({ sensor: kinds[i][0], edge: kinds[i][1], us }))),
  bemfCrossings: fc
    .tuple(
      sortedTimes(4, 80),
      fc.array(
        fc.tuple(
          fc.constantFrom(
            'A' as const,
            'B' as const,
            'C' as const,
            'AB' as const,
            'BC' as const,
            'CA' as const,
          ),
          fc.constantFrom('rise' as const, 'fall' as const),
        ),
        { minLength: 80, maxLength: 80 },
      ),
    )
    .map(([times, kinds]) => times.map((us, i) => ({ channel: kinds[i][0], edge: kinds[i][1], us }))),
});

describe('calibrate on arbitrary well-formed input', () => {
  it('returns a result that satisfies the result schema, or a typed input error — never anything else', () => {
    fc.assert(
      fc.property(fc.array(segment, { minLength: 1, maxLength: 3 }), (segments) => {
        let result: unknown;
        try {
          result = calibrate({ measurementId: 'fuzz', serial: 'F-1', segments }, recipe);
        } catch (e) {
          expect(e).toBeInstanceOf(CalibrationInputError);
          return;
        }
        // z.number() rejects NaN and infinities, so this also proves every figure is finite.
        const parsed = calibrationResultSchema.safeParse(result);
        expect(parsed.success, JSON.stringify(parsed.error?.issues.slice(0, 3))).toBe(true);
      }),
      { numRuns: 150, seed: 7 },
    );
  });
});
