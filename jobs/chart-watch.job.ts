import { watchStationModel } from '#server/modules/alerts/alerts.service';
import type { QueuePayload } from './queues';
import type { WorkerDeps } from './worker-deps';

/** Takes a station × model's new calibrations into its watched charts; a second run finds nothing new. */
export function runChartWatch(deps: WorkerDeps, payload: QueuePayload<'chartWatch'>) {
  return watchStationModel(
    { db: deps.db, clock: deps.clock, logger: deps.logger, mailer: deps.mailer, publicUrl: deps.publicUrl },
    payload,
  );
}
