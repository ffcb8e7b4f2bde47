import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';

/**
 * The worker as a real process: killed with SIGKILL in the middle of a calibration, the job is
 * retried by the next worker and exactly one calibration exists afterwards.
 */
let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
const root = path.resolve(__dirname, '..');

function startWorkerProcess(url: string): ChildProcess {
  return spawn(path.join(root, 'node_modules/.bin/tsx'), ['jobs/worker.ts'], {
    cwd: root,
    env: { ...process.env, DATABASE_URL: url, LOG_LEVEL: 'silent', QUEUE_MAINTENANCE_SECONDS: '1' },
    stdio: 'ignore',
    detached: true,
  });
}

async function until<T>(
  what: string,
  fn: () => Promise<T | undefined | null | false>,
  timeoutMs = 30_000,
): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const v = await fn();
    if (v) return v;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`timed out waiting for ${what}`);
}

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db);
});
afterAll(async () => {
  await t?.close();
});

describe('the calibration job survives a worker killed mid-job', () => {
  it('leaves exactly one calibration after the retry', { timeout: 90_000 }, async () => {
    // A short expiry so the abandoned job is noticed within seconds (production: 60 s).
    await t.deps.queue.boss.updateQueue('calibration-compute', {
      name: 'calibration-compute',
      expireInSeconds: 2,
      retryLimit: 5,
      retryDelay: 1,
    });
    const m = simulatedMeasurement(line.recipe.body, 'SN-CRASH');
    const posted = await request(t.app)
      .post('/api/station/measurements')
      .set('X-Station-Key', line.key)
      .send(m);
    expect(posted.status).toBe(202);

    // Hold the calibrations table so the worker stops half-way: its job fetched and active, its first
    // read waiting, nothing committed. (The usual calibration commits in one statement, so a worker killed
    // once that statement is sent leaves a committed calibration, which the retry then finds.)
    const blocker = await t.database.ownerPool().connect();
    await blocker.query('begin');
    await blocker.query('lock table calibrations in access exclusive mode');

    const first = startWorkerProcess(t.database.url);
    await until('the worker to start the job', async () => {
      const { rows } = await t.database.pool.query(
        `select 1 from pgboss.job where name = 'calibration-compute' and state = 'active'`,
      );
      return rows.length > 0;
    });
    await until('the worker to wait on the calibrations table', async () => {
      const { rows } = await t.database.pool.query(
        `select 1 from pg_stat_activity where application_name = 'phasewright-worker' and wait_event_type = 'Lock'`,
      );
      return rows.length > 0;
    });
    process.kill(-first.pid!, 'SIGKILL');
    await new Promise((r) => first.once('exit', r));
    await blocker.query('rollback');
    blocker.release();
    expect((await t.database.pool.query('select count(*)::int as n from calibrations')).rows[0].n).toBe(0);

    const second = startWorkerProcess(t.database.url);
    try {
      await until(
        'the retried job to commit a calibration',
        async () => {
          const { rows } = await t.database.pool.query('select count(*)::int as n from calibrations');
          return rows[0].n > 0;
        },
        60_000,
      );
      await until('the compute job to complete', async () => {
        const { rows } = await t.database.pool.query(
          `select state from pgboss.job where name = 'calibration-compute' and data->>'measurementPk' = (select id::text from measurements where measurement_id = $1)`,
          [m.measurementId],
        );
        return rows[0]?.state === 'completed';
      });
      const { rows } = await t.database.pool.query(`select verdict, attempt from calibrations`);
      expect(rows).toEqual([{ verdict: 'pass', attempt: 1 }]);
      const unit = await t.database.pool.query(
        `select status, attempts from units where serial = 'SN-CRASH'`,
      );
      expect(unit.rows[0]).toEqual({ status: 'calibrated', attempts: 1 });
    } finally {
      process.kill(-second.pid!, 'SIGTERM');
      await new Promise((r) => second.once('exit', r));
    }
  });
});
