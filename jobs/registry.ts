import type { z } from 'zod';
import type { queues } from './queues';
import type { WorkerDeps } from './worker-deps';
import { runHousekeeping } from './housekeeping.job';
import { runCalibrationComputes } from './calibration-compute.job';
import { runTravelerRenders } from './traveler-render.job';
import { runWhatIfJob } from './what-if-run.job';
import { runChartWatch } from './chart-watch.job';
import { RENDER_BACK_PRESSURE, type BackPressureOptions } from './back-pressure';

export interface JobDef<K extends keyof typeof queues = keyof typeof queues> {
  queue: K;
  /** Cron expression (UTC) when the job also runs on a schedule. */
  schedule?: string;
  /** Jobs fetched per poll, and parallel fetch loops in one worker process. */
  batchSize: number;
  concurrency: number;
  /**
   * Jobs of one batch with equal payloads do one run between them: true only for a handler that takes in
   * everything new for its payload whenever it runs (the chart watch), so one run serves every job that
   * was queued before the batch was fetched. If that run throws, each of its jobs fails (and is retried).
   */
  coalesce?: boolean;
  /**
   * Seconds between a fetch loop's polls when nobody wakes it (default 2). A queue that coalesces takes in
   * more per run the longer it waits: each run has a fixed cost in round trips, whatever it takes in.
   */
  pollSeconds?: number;
  /**
   * Milliseconds between a producer's wake-up and the fetch it triggers, so that the jobs committed
   * meanwhile are fetched, and run, together (for a batch handler whose cost is mostly per batch). Absent:
   * fetch at once.
   */
  gatherMs?: number;
  /**
   * Back-pressure: a fetched batch first waits (bounded) while a job of `queue` has waited longer than
   * `pressure.olderThanMs` to be fetched and that backlog is being worked off, so this queue's producers do
   * not run far ahead of the work they queue there (calibrations ahead of their travelers). See back-pressure.ts.
   */
  yieldsTo?: { queue: keyof typeof queues; pressure: BackPressureOptions };
  /** Runs one job (or one coalesced run). */
  handler?: (deps: WorkerDeps, payload: Payload<K>) => Promise<unknown>;
  /**
   * Runs a whole fetched batch in one call, instead of `handler`: one outcome a job, in order, an Error
   * failing that job alone (and pg-boss retrying it). If the call itself throws, every job of the batch fails.
   */
  batchHandler?: (deps: WorkerDeps, payloads: Payload<K>[]) => Promise<(Error | undefined)[]>;
}

type Payload<K extends keyof typeof queues> = z.infer<(typeof queues)[K]['payload']>;

function job<K extends keyof typeof queues>(
  def: JobDef<K> &
    (
      | { handler: JobDef<K>['handler']; batchHandler?: never }
      | { batchHandler: JobDef<K>['batchHandler']; handler?: never }
    ),
): JobDef {
  return def as unknown as JobDef;
}

/** Every job the worker runs, one line each. */
// prettier-ignore
export const jobRegistry: JobDef[] = [
  job({ queue: 'calibrationCompute', batchSize: 8, concurrency: 2, yieldsTo: { queue: 'travelerRender', pressure: RENDER_BACK_PRESSURE }, batchHandler: runCalibrationComputes }),
  job({ queue: 'travelerRender', batchSize: 16, concurrency: 2, gatherMs: 250, batchHandler: runTravelerRenders }),
  job({ queue: 'whatIfRun', batchSize: 1, concurrency: 1, handler: runWhatIfJob }),
  job({ queue: 'chartWatch', batchSize: 1000, concurrency: 1, coalesce: true, pollSeconds: 10, handler: runChartWatch }),
  job({ queue: 'housekeeping', schedule: '*/10 * * * *', batchSize: 1, concurrency: 1, handler: (deps) => runHousekeeping(deps) }),
];
