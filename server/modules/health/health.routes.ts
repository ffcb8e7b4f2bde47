import { sql } from 'drizzle-orm';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import { healthSchema, type Health } from '#shared/schemas/health';

export const APP_VERSION = '0.1.0';

export function healthRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/health',
      access: 'anyone',
      summary: 'Database and job-queue status',
      responses: {
        200: { description: 'The database and the job queue answer', schema: healthSchema },
        503: { description: 'The database or the job queue does not answer', schema: healthSchema },
      },
      handle: async (_input, res) => {
        const started = performance.now();
        let database: Health['database'];
        try {
          await deps.db.execute(sql`select 1`);
          database = { ok: true, latencyMs: Math.round((performance.now() - started) * 10) / 10 };
        } catch (e) {
          database = { ok: false, latencyMs: null, error: (e as Error).message };
        }
        let queue: Health['queue'];
        try {
          queue = { ok: true, ...(await deps.queue.stats()) };
        } catch (e) {
          queue = { ok: false, queued: null, active: null, failed: null, error: (e as Error).message };
        }
        const body: Health = {
          status: database.ok && queue.ok ? 'ok' : 'degraded',
          version: APP_VERSION,
          database,
          queue,
        };
        res.status(body.status === 'ok' ? 200 : 503).json(body);
      },
    }),
  ];
}
