import type { AppDeps } from '#server/deps';
import { jobErrors } from './jobs.errors';
import { defineRoute } from '#server/lib/http';
import { insertAudit } from '../audit/audit.repository';
import { BOSS_SCHEMA } from '#jobs/queue-client';
import { failedJobsResponseSchema, jobIdParamsSchema, jobReplayedSchema } from '#shared/schemas/jobs';

interface FailedJobRow {
  id: string;
  name: string;
  data: unknown;
  output: unknown;
  retry_count: number;
  created_on: Date;
  completed_on: Date | null;
}

/** Jobs that used up their retries, for an administrator to read and replay. */
export function jobsRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/admin/jobs/failed',
      access: ['admin'],
      summary: 'Jobs that failed after their retries, newest first, with the error',
      responses: { 200: { description: 'At most 200 failed jobs', schema: failedJobsResponseSchema } },
      handle: async (_input, res) => {
        const { rows } = await deps.pool.query<FailedJobRow>(
          `select id, name, data, output, retry_count, created_on, completed_on
             from ${BOSS_SCHEMA}.job where state = 'failed' order by completed_on desc nulls last limit 200`,
        );
        res.json({
          jobs: rows.map((r) => ({
            id: r.id,
            queue: r.name,
            payload: r.data,
            error: (r.output as { message?: string } | null)?.message ?? JSON.stringify(r.output),
            retries: r.retry_count,
            createdAt: r.created_on.toISOString(),
            failedAt: r.completed_on?.toISOString() ?? null,
          })),
        });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/admin/jobs/:id/replay',
      access: ['admin'],
      summary: 'Run a failed job again',
      request: { params: jobIdParamsSchema },
      responses: { 202: { description: 'The job is queued again', schema: jobReplayedSchema } },
      handle: async ({ params: { id }, caller }, res) => {
        const { rows } = await deps.pool.query<{ name: string }>(
          `select name from ${BOSS_SCHEMA}.job where id = $1 and state = 'failed'`,
          [id],
        );
        if (!rows[0]) throw jobErrors.notFailed();
        await deps.queue.boss.retry(rows[0].name, id);
        await deps.pool.query(`select pg_notify('phasewright_jobs', $1)`, [rows[0].name]);
        await insertAudit(deps.db, {
          actorId: caller.user.id,
          actorName: caller.user.displayName,
          action: 'jobs.replayed',
          subjectType: 'job',
          subjectId: id,
          after: { queue: rows[0].name },
        });
        res.status(202).json({ id, queue: rows[0].name, state: 'retry' });
      },
    }),
  ];
}
