import type { StationPrincipal } from '#server/lib/auth';
import type { DbOrTx } from '#server/db/client';
import { calibrationViews } from '../read-models/calibration-views';
import { measurementErrors } from './measurements.errors';
import { measurementIdentity } from './measurements.repository';

/**
 * The measurements module's services, one part each: `intake/` (a station's post or capture, stored
 * with its job), `compute/` (the engine's run and the calibration's commit), `recompute/` (an
 * engineer's later analysis), `programming/` (what the station wrote and read back). Other modules
 * and the jobs import from here.
 */
export { acceptMeasurement, measurementFromCapture } from './intake/intake.service';
export { computeCalibration } from './compute/compute.service';
export { runEngine } from './compute/run-engine';
export { requestRecompute } from './recompute/recompute.service';
export { confirmProgramming } from './programming/programming.service';
export type { MeasurementsContext } from './measurements.context';

/**
 * The newest calibration of a station's measurement (null while it is computing). One query when it
 * exists; a second only to tell "not computed yet" from "no such measurement here".
 */
export async function measurementResult(db: DbOrTx, station: StationPrincipal | null, measurementId: string) {
  const [view] = await calibrationViews(db, { measurementId, purpose: 'station', limit: 1 });
  if (view && (!station || view.stationId === station.stationId)) return { view };
  if (!view) {
    const m = await measurementIdentity(db, measurementId);
    if (m && (!station || m.stationId === station.stationId)) return { view: null };
  }
  throw measurementErrors.notFound(measurementId);
}
