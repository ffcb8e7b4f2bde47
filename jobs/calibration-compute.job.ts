import { computeCalibrations } from '#server/modules/measurements/measurements.service';
import type { QueuePayload } from './queues';
import type { WorkerDeps } from './worker-deps';

/**
 * Computes a fetched batch of stored measurements, each with its recipe version (one claim for the batch,
 * one commit a calibration); a second run of a job finds its result and stops. One outcome a job: an Error
 * fails that job alone (and pg-boss retries it).
 */
export async function runCalibrationComputes(
  deps: WorkerDeps,
  payloads: QueuePayload<'calibrationCompute'>[],
): Promise<(Error | undefined)[]> {
  const ctx = { db: deps.db, pool: deps.pool, queue: deps.queue, clock: deps.clock };
  const outcomes = await computeCalibrations(ctx, payloads);
  return outcomes.map((o) => (o instanceof Error ? o : undefined));
}
