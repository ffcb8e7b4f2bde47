import { renderFirstTraveler } from '#server/modules/travelers/travelers.service';
import type { QueuePayload } from './queues';
import type { WorkerDeps } from './worker-deps';

/** Renders and stores print 1 of a committed calibration's traveler; idempotent. */
export function runTravelerRender(deps: WorkerDeps, payload: QueuePayload<'travelerRender'>) {
  return renderFirstTraveler(deps.db, payload.calibrationId, deps.clock());
}
