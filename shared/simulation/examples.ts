import type { Measurement } from '../schemas/measurement';
import type { Recipe } from '../schemas/recipe';
import { simulateCapture } from './capture-sim';
import { createRng } from './rng';
import { simulateMeasurement } from './simulate';

/** A sample recipe: 4 pole pairs, 120° layout with edges on the six-step boundaries. */
export function exampleRecipe(): Recipe {
  return {
    name: 'Example 4-pole-pair motor, 120° halls',
    polePairs: 4,
    hallRiseDeg: { A: 30, B: 150, C: 270 },
    bemfDelayUs: 2.5,
    debounceUs: 1,
    countsPerTurn: 65536,
    countsSigned: true,
    maxAttempts: 3,
    limits: {
      offsetDeg: [-15, 15],
      edgeResidualDeg: 2,
      speedRpm: [1000, 4000],
      minElectricalRevs: 20,
      fitResidualDeg: 0.5,
      keVPerKrpm: [5, 7],
    },
  };
}

/** A sample measurement: forward then reverse while coasting down, 1 µs jitter, a little bounce. */
export function exampleMeasurement(seed = 1): Measurement {
  const recipe = exampleRecipe();
  return simulateMeasurement(
    {
      polePairs: recipe.polePairs,
      hallRiseDeg: recipe.hallRiseDeg,
      offsetDeg: 4.2,
      sensorErrorDeg: { A: 0.3, B: -0.5, C: 0.1 },
      hysteresisDeg: 0.4,
      latencyUs: 1.5,
      jitterUs: 1,
      bemfDelayUs: recipe.bemfDelayUs,
      bounceProbability: 0.05,
      channels: ['A', 'B', 'C'],
      measurementId: '6f1d2c3a-0000-4000-8000-000000000001',
      serial: 'EX-000123',
      segments: [
        {
          direction: 'forward',
          profile: { kind: 'coast', startRpm: 3000, endRpm: 2200 },
          electricalTurns: 40,
        },
        {
          direction: 'reverse',
          profile: { kind: 'coast', startRpm: 3000, endRpm: 2200 },
          electricalTurns: 40,
        },
      ],
    },
    createRng(seed),
  ).measurement;
}

/** A sample sampled capture (CSV text): phase voltages at 200 kS/s, coasting down, with noise. */
export function exampleCaptureCsv(seed = 2): string {
  const recipe = exampleRecipe();
  return simulateCapture(
    {
      polePairs: recipe.polePairs,
      hallRiseDeg: recipe.hallRiseDeg,
      offsetDeg: 4.2,
      sensorErrorDeg: { A: 0.3, B: -0.5, C: 0.1 },
      direction: 'forward',
      profile: { kind: 'coast', startRpm: 3000, endRpm: 2200 },
      electricalTurns: 24,
      keVPerKrpm: 6.1,
      harmonics: { 5: 0.03, 7: 0.01 },
      sampleRateHz: 200_000,
      noiseV: 0.02,
      commonModeV: 1,
      channels: 'phase',
      hallHighV: 5,
    },
    createRng(seed),
  ).csv;
}
