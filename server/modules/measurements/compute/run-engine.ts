import { calibrate, CalibrationInputError } from '#shared/calibration';
import { calibrateCapture } from '#shared/capture/capture';
import type { CalibrationResult } from '#shared/schemas/calibration-result';
import type { Measurement } from '#shared/schemas/measurement';
import type { CalibrationRecord } from '#server/modules/calibrations/calibrations.table';
import type { RecipeRecord } from '#server/modules/recipes/recipes.table';

/**
 * Runs the engine on a stored measurement: a capture is recomputed from its CSV, posted timings from
 * their JSON. Unusable input is a stored outcome ('unusable'), not a failure of the job.
 */
export function runEngine(
  m: {
    source: 'timings' | 'capture';
    payload: Measurement;
    payloadRaw: string | null;
    measurementId: string;
    serial: string;
  },
  recipe: RecipeRecord,
): { result: CalibrationResult | null; stored: CalibrationRecord['result']; computeMs: number } {
  const t0 = performance.now();
  try {
    const result =
      m.source === 'capture'
        ? calibrateCapture(m.payloadRaw!, recipe.body, {
            measurementId: m.measurementId,
            serial: m.serial,
            direction: m.payload.segments[0]?.direction,
          }).result
        : calibrate(m.payload, recipe.body);
    return { result, stored: result, computeMs: performance.now() - t0 };
  } catch (e) {
    if (!(e instanceof CalibrationInputError)) throw e;
    return {
      result: null,
      stored: { error: { code: e.code, message: e.message, issues: e.issues } },
      computeMs: performance.now() - t0,
    };
  }
}
