import { describe, expect, it } from 'vitest';
import { simulateMeasurement } from '../simulation/simulate';
import { createRng } from '../simulation/rng';
import { circularMeanDeg } from './angles';
import { calibrate } from './index';
import { traceMeasurement } from './trace';
import type { Recipe } from '../schemas/recipe';

const recipe: Recipe = {
  name: 'trace test',
  polePairs: 4,
  hallRiseDeg: { A: 0, B: 120, C: 240 },
  bemfDelayUs: 0,
  debounceUs: 2,
  countsPerTurn: 65536,
  countsSigned: true,
  maxAttempts: 3,
  limits: { offsetDeg: [-15, 15], edgeResidualDeg: 4, speedRpm: [100, 20000], minElectricalRevs: 5 },
};

function measured(offsetDeg: number) {
  return simulateMeasurement(
    {
      polePairs: 4,
      hallRiseDeg: recipe.hallRiseDeg,
      offsetDeg,
      jitterUs: 0.5,
      channels: ['AB', 'BC', 'CA'],
      segments: [
        { direction: 'forward', profile: { kind: 'constant', speedRpm: 3000 }, electricalTurns: 24 },
      ],
      measurementId: '00000000-0000-4000-8000-000000000001',
      serial: 'TRACE-1',
    },
    createRng(11),
  ).measurement;
}

describe('raw data behind a calibration', () => {
  it("puts each hall edge's offset at the unit's true offset, as the independent simulator built it", () => {
    // Ground truth from the physical simulator (shared/simulation), not from the engine.
    const [segment] = traceMeasurement(measured(6), recipe);
    const offsets = segment.edges.map((e) => e.offsetDeg).filter((v): v is number => v !== null);
    expect(offsets.length).toBeGreaterThan(100);
    expect(circularMeanDeg(offsets)!).toBeCloseTo(6, 0);
    for (const o of offsets) expect(Math.abs(o - 6)).toBeLessThan(2);
  });

  it("averages per edge type to the engine's residuals", () => {
    const m = measured(-4);
    const result = calibrate(m, recipe);
    const [segment] = traceMeasurement(m, recipe);
    for (const e of result.edges) {
      const own = segment.edges.filter(
        (x) => x.sensor === e.sensor && x.edge === e.edge && x.offsetDeg !== null,
      );
      const mean = circularMeanDeg(own.map((x) => x.offsetDeg!))!;
      expect(mean - result.offsetDeg!).toBeCloseTo(e.residualDeg!, 6);
    }
    expect(segment.crossings.length).toBeGreaterThan(100);
  });
});
