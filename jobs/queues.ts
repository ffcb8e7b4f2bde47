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
} as const;

export type QueueName = (typeof queues)[keyof typeof queues]['name'];
export type QueuePayload<K extends keyof typeof queues> = z.infer<(typeof queues)[K]['payload']>;
