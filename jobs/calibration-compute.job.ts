import { computeCalibration } from '#server/modules/measurements/measurements.service';
import type { QueuePayload } from './queues';
import type { WorkerDeps } from './worker-deps';

/** Computes one stored measurement with one recipe version; a second run finds the result and stops. */
export function runCalibrationCompute(deps: WorkerDeps, payload: QueuePayload<'calibrationCompute'>) {
  return computeCalibration({ db: deps.db, pool: deps.pool, queue: deps.queue, clock: deps.clock }, payload);
}
