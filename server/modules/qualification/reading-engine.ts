import type { DbOrTx } from '#server/db/client';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { runEngine } from '../measurements/measurements.service';
import { measurementErrors } from '../measurements/measurements.errors';
import { validateCalibrationInput } from '#shared/calibration';
import type { Measurement } from '#shared/schemas/measurement';

/**
 * Computes a reading that is not production (a reference unit's qualification reading or a gauge-study
 * trial) with the model's active recipe: the same input checks as the station intake, the same engine,
 * and a refusal in the intake's words when no offset comes out. Nothing is stored here.
 */
export async function computeReading(db: DbOrTx, modelId: string, measurement: Measurement, serial: string) {
  const found = await findModelWithActiveRecipe(db, modelId);
  if (!found?.recipe) throw measurementErrors.noActiveRecipe(found?.model.code ?? '?');
  const recipe = found.recipe;
  const usable = validateCalibrationInput(measurement, recipe.body);
  if (!usable.ok) throw measurementErrors.unusable(usable.issues);
  const { result, stored } = runEngine(
    {
      source: 'timings',
      payload: measurement,
      payloadRaw: null,
      measurementId: measurement.measurementId,
      serial,
    },
    recipe,
  );
  if (!result || result.offsetDeg === null)
    throw measurementErrors.unusable([
      { path: 'segments', message: 'the engine could not compute an offset' },
    ]);
  return { recipe, result, offsetDeg: result.offsetDeg, stored };
}
