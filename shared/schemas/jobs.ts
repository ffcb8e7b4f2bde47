import { z } from 'zod';

/** Job inspection for administrators: jobs that used up their retries, and replaying one. */

export const jobIdParamsSchema = z.object({ id: z.string().uuid('Not a job id') });

const failedJobSchema = z.object({
  id: z.string(),
  queue: z.string(),
  payload: z.unknown(),
  /** The job's error message (or its whole output as JSON when it has no message). */
  error: z.string(),
  retries: z.number().int(),
  createdAt: z.string(),
  failedAt: z.string().nullable(),
});

export const failedJobsResponseSchema = z.object({ jobs: z.array(failedJobSchema) });

export const jobReplayedSchema = z.object({ id: z.string(), queue: z.string(), state: z.literal('retry') });
