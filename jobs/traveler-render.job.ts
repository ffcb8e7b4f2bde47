import { renderFirstTravelers } from '#server/modules/travelers/travelers.service';
import type { QueuePayload } from './queues';
import type { WorkerDeps } from './worker-deps';

/**
 * Renders and stores print 1 of a batch of committed calibrations' travelers, reading and storing them
 * together; idempotent. One outcome a job, in order: an error fails that job alone.
 */
export async function runTravelerRenders(
  deps: WorkerDeps,
  payloads: QueuePayload<'travelerRender'>[],
): Promise<(Error | undefined)[]> {
  const outcomes = await renderFirstTravelers(
    deps.pool,
    payloads.map((p) => p.calibrationId),
    deps.clock(),
  );
  return outcomes.map((o) => o.error);
}
