import type { WorkerDeps } from './worker-deps';
import { pruneLinkTokens } from '#server/modules/auth/auth.service';

/**
 * Every ten minutes: remove invitation and reset links that can no longer be used, and log the
 * queue depth so a backlog shows in the worker's log. Safe to run twice: both steps are idempotent.
 */
export async function runHousekeeping(deps: WorkerDeps): Promise<{ prunedTokens: number }> {
  const prunedTokens = await pruneLinkTokens(deps.db, deps.clock());
  const depth = await deps.queue.stats();
  deps.logger.info({ prunedTokens, queue: depth }, 'housekeeping done');
  return { prunedTokens };
}
