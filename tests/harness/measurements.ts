import { randomUUID } from 'node:crypto';
import { createRng } from '#shared/simulation/rng';
import { simulateMeasurement, type SimulationSpec } from '#shared/simulation/simulate';
import type { Recipe } from '#shared/schemas/recipe';
import type { Measurement } from '#shared/schemas/measurement';

/**
 * A measurement from the independent simulator for a unit built to `recipe`, turning forward at
 * constant speed with a little jitter. `offsetDeg` is the true hall offset the unit has.
 */
export function simulatedMeasurement(
  recipe: Recipe,
  serial: string,
  opts: { offsetDeg?: number; seed?: number; measurementId?: string; extra?: Partial<SimulationSpec> } = {},
): Measurement {
  const { measurement } = simulateMeasurement(
    {
      polePairs: recipe.polePairs,
      hallRiseDeg: recipe.hallRiseDeg,
      offsetDeg: opts.offsetDeg ?? 3,
      jitterUs: 0.5,
      channels: ['AB', 'BC', 'CA'],
      segments: [
        { direction: 'forward', profile: { kind: 'constant', speedRpm: 3000 }, electricalTurns: 24 },
      ],
      measurementId: opts.measurementId ?? randomUUID(),
      serial,
      ...opts.extra,
    },
    createRng(opts.seed ?? 7),
  );
  return measurement;
}
