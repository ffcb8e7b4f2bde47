import { createDatabase } from '../server/db/client';
import { createLogger } from '../server/lib/logger';
import { startJobQueue } from './queue-client';
import { queues } from './queues';
import { jobRegistry } from './registry';
import type { WorkerDeps } from './worker-deps';

/**
 * The worker process: serves every queue in the registry. Each job's payload is validated against
 * its queue schema; a handler that throws is retried by pg-boss with the registry's policy.
 */
export async function startWorker(opts: { databaseUrl: string; logLevel?: string }) {
  const logger = createLogger(opts.logLevel ?? 'info', 'phasewright-worker');
  const database = createDatabase(opts.databaseUrl, { max: 6, applicationName: 'phasewright-worker' });
  const queue = await startJobQueue(opts.databaseUrl, database.pool, { supervise: true, schedule: true });
  const deps: WorkerDeps = { db: database.db, pool: database.pool, logger, clock: () => new Date(), queue };
  for (const job of jobRegistry) {
    const def = queues[job.queue];
    await queue.boss.updateQueue(def.name, {
      name: def.name,
      retryLimit: job.retryLimit,
      retryDelay: job.retryDelaySeconds,
      retryBackoff: true,
    });
    await queue.boss.work(def.name, { pollingIntervalSeconds: 2 }, async (jobs) => {
      for (const j of jobs) {
        const payload = def.payload.parse(j.data ?? {});
        await job.handler(deps, payload as never);
      }
    });
    if (job.schedule) await queue.boss.schedule(def.name, job.schedule, {}, { tz: 'UTC' });
  }
  logger.info({ jobs: jobRegistry.map((j) => j.queue) }, 'worker started');
  return {
    deps,
    async stop() {
      await queue.stop();
      await database.close();
    },
  };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const url = process.env.DATABASE_URL;
  if (!url) {
    console.error('DATABASE_URL is not set.');
    process.exit(2);
  }
  const worker = await startWorker({ databaseUrl: url, logLevel: process.env.LOG_LEVEL });
  const stop = () => void worker.stop().then(() => process.exit(0));
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}
