import type { StationPrincipal } from '#server/lib/auth';
import type pg from 'pg';
import { stationResultView } from '../read-models/calibration-views';
import { measurementErrors } from './measurements.errors';

/**
 * The measurements module's services, one part each: `intake/` (a station's post or capture, stored
 * with its job), `compute/` (the engine's run and the calibration's commit), `recompute/` (an
 * engineer's later analysis), `programming/` (what the station wrote and read back). Other modules
 * and the jobs import from here.
 */
export { acceptMeasurement, measurementFromCapture } from './intake/intake.service';
export { computeCalibration, computeCalibrations } from './compute/compute.service';
export { runEngine } from './compute/run-engine';
export { requestRecompute } from './recompute/recompute.service';
export { confirmProgramming } from './programming/programming.service';
export type { MeasurementsContext } from './measurements.context';

/**
 * The newest calibration of a station's measurement (null while it is computing), in one statement
 * either way; a measurement of another station is not found, as one that does not exist.
 */
export async function measurementResult(
  pool: pg.Pool,
  station: StationPrincipal | null,
  measurementId: string,
) {
  const found = await stationResultView(pool, measurementId);
  const owner = found?.view?.stationId ?? found?.stationId;
  if (found && (!station || owner === station.stationId)) return { view: found.view };
  throw measurementErrors.notFound(measurementId);
}
