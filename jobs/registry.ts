import type { z } from 'zod';
import { queues } from './queues';
import type { WorkerDeps } from './worker-deps';
import { runHousekeeping } from './housekeeping.job';

export interface JobDef<K extends keyof typeof queues = keyof typeof queues> {
  queue: K;
  /** Cron expression (UTC) when the job also runs on a schedule. */
  schedule?: string;
  /** Retry policy for a failed run. */
  retryLimit: number;
  retryDelaySeconds: number;
  handler: (deps: WorkerDeps, payload: z.infer<(typeof queues)[K]['payload']>) => Promise<unknown>;
}

/** Every job the worker runs, one line each. */
export const jobRegistry: JobDef[] = [
  {
    queue: 'housekeeping',
    schedule: '*/10 * * * *',
    retryLimit: 2,
    retryDelaySeconds: 30,
    handler: (deps) => runHousekeeping(deps),
  },
];
