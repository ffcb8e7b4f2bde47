import { runWhatIf } from '#server/modules/recipes/what-if.service';
import type { QueuePayload } from './queues';
import type { WorkerDeps } from './worker-deps';

/** Replays past units with a recipe version; the run's own row is all it writes. */
export function runWhatIfJob(deps: WorkerDeps, payload: QueuePayload<'whatIfRun'>) {
  return runWhatIf({ db: deps.db, pool: deps.pool, clock: deps.clock }, payload.runId);
}
