import { measurementSchema } from '../schemas/measurement';
import type { Recipe } from '../schemas/recipe';
import { captureSignals, captureToMeasurement } from './capture';
import { parseNumericCsv } from './csv';

/**
 * The canonical text of a measurement as the server hashed it when it was accepted (SHA-256 of this
 * text is the stored `payloadSha256`), rebuilt from the text exactly as the station posted it: posted
 * timings are parsed and written in the schema's key order; a capture CSV is turned into timings with
 * the recipe it was accepted under, as the intake did. Lets anyone check a download against the stored hash.
 */
export function canonicalMeasurementText(
  posted: string,
  source: 'timings' | 'capture',
  capture?: { recipe: Recipe; measurementId: string; serial: string; direction: 'forward' | 'reverse' },
): string {
  if (source === 'timings') return JSON.stringify(measurementSchema.parse(JSON.parse(posted)));
  if (!capture) throw new Error('A capture needs its recipe, id, serial and direction to be rebuilt.');
  const m = captureToMeasurement(captureSignals(parseNumericCsv(posted)), capture.recipe, {
    measurementId: capture.measurementId,
    serial: capture.serial,
    direction: capture.direction,
  });
  return JSON.stringify(measurementSchema.parse(m));
}
