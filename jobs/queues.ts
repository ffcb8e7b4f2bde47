import { z } from 'zod';

/**
 * Every queue the worker serves, with the schema its payload must satisfy (producers and the worker
 * both validate against it) and its policy: retries with exponential backoff from `retryDelay`
 * seconds, and `expireInSeconds` after which a job still active is taken as abandoned by a dead
 * worker and retried.
 */
export const queues = {
  housekeeping: {
    name: 'housekeeping',
    payload: z.object({}).strict(),
    policy: { retryLimit: 2, retryDelay: 30, retryBackoff: true, expireInSeconds: 300 },
  },
  /** Compute one measurement with one recipe version (enqueued in the transaction that stores the measurement). */
  calibrationCompute: {
    name: 'calibration-compute',
    payload: z
      .object({
        measurementPk: z.string().uuid(),
        recipeId: z.string().uuid(),
        /** Present for an engineer's recomputation (analysis only; the unit is not changed). */
        recompute: z.object({ requestedBy: z.string().uuid(), reason: z.string().max(500) }).optional(),
      })
      .strict(),
    // A calibration takes milliseconds (a large capture about a second): a job still active after 30 s
    // belonged to a worker that died, and is retried then.
    policy: { retryLimit: 5, retryDelay: 1, retryBackoff: true, expireInSeconds: 30 },
  },
  /** Render print 1 of the traveler for a committed calibration (enqueued with the calibration). */
  travelerRender: {
    name: 'traveler-render',
    payload: z.object({ calibrationId: z.string().uuid() }).strict(),
    policy: { retryLimit: 5, retryDelay: 2, retryBackoff: true, expireInSeconds: 30 },
  },
  /** Take a station × model's new calibrations into its watched charts (enqueued with each calibration). */
  chartWatch: {
    name: 'chart-watch',
    payload: z.object({ stationId: z.string().uuid(), modelId: z.string().uuid() }).strict(),
    policy: { retryLimit: 5, retryDelay: 2, retryBackoff: true, expireInSeconds: 120 },
  },
  /** Replay past units' measurements with a recipe version (analysis only; changes no unit). */
  whatIfRun: {
    name: 'what-if-run',
    payload: z.object({ runId: z.string().uuid() }).strict(),
    policy: { retryLimit: 1, retryDelay: 5, retryBackoff: false, expireInSeconds: 1800 },
  },
} as const;

/**
 * Render order of travelers when the renderers have a backlog: newest first. The unit at a station right
 * now is the newest calibration of that station, so its traveler is rendered before any older one; an
 * older unit's traveler (history) waits for a quiet moment, and a person who asks to print one gets it
 * rendered in the request itself, never behind the queue (travelers.service: printTraveler,
 * currentTraveler). pg-boss fetches the highest priority first, then the oldest: the priority is the
 * commit time in whole seconds since 2026-01-01 UTC, which fits its int column until 2094.
 */
export const TRAVELER_PRIORITY_EPOCH_MS = Date.UTC(2026, 0, 1);

export function travelerRenderPriority(committedAt: Date): number {
  const seconds = Math.floor((committedAt.getTime() - TRAVELER_PRIORITY_EPOCH_MS) / 1000);
  return Math.min(2 ** 31 - 1, Math.max(0, seconds));
}

/** PostgreSQL channel on which producers announce new jobs, so workers start them at once. */
export const JOBS_WAKE_CHANNEL = 'phasewright_jobs';

export type QueuePayload<K extends keyof typeof queues> = z.infer<(typeof queues)[K]['payload']>;
