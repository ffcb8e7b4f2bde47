import { z } from 'zod';

/**
 * Every queue the worker serves, with the schema its payload must satisfy. Producers and the worker
 * both validate against these.
 */
export const queues = {
  housekeeping: {
    name: 'housekeeping',
    payload: z.object({}).strict(),
  },
  /** Compute one measurement with one recipe version (enqueued in the transaction that stores the measurement). */
  calibrationCompute: {
    name: 'calibration-compute',
    payload: z.object({ measurementPk: z.string().uuid(), recipeId: z.string().uuid() }).strict(),
  },
  /** Render print 1 of the traveler for a committed calibration (enqueued with the calibration). */
  travelerRender: {
    name: 'traveler-render',
    payload: z.object({ calibrationId: z.string().uuid() }).strict(),
  },
} as const;

/** PostgreSQL channel on which producers announce new jobs, so workers start them at once. */
export const JOBS_WAKE_CHANNEL = 'phasewright_jobs';

export type QueueName = (typeof queues)[keyof typeof queues]['name'];
export type QueuePayload<K extends keyof typeof queues> = z.infer<(typeof queues)[K]['payload']>;
