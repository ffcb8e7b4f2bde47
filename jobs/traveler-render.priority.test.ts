import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { computeCalibration } from '#server/modules/measurements/measurements.service';
import { queues, travelerRenderPriority } from './queues';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db);
});
afterAll(async () => {
  await t?.close();
});

describe('traveler render order under a backlog', () => {
  it('renders the newest calibration first: the unit at the station right now does not wait behind history', async () => {
    const name = queues.travelerRender.name;
    // Nothing else is waiting in this database's render queue.
    await t.database.pool.query(`delete from pgboss.job where name = $1`, [name]);
    const base = Date.UTC(2026, 11, 2, 14, 0, 0);
    const sent: Record<string, string> = {};
    // Sent oldest first, as a backlog builds up: a unit from an hour ago, one from a minute ago, one now.
    for (const [label, ago] of [
      ['hour', 3_600_000],
      ['minute', 60_000],
      ['now', 0],
    ] as const) {
      const calibrationId = crypto.randomUUID();
      sent[calibrationId] = label;
      await t.deps.queue.send(
        'travelerRender',
        { calibrationId },
        { priority: travelerRenderPriority(new Date(base - ago)), wake: false },
      );
    }
    const order: string[] = [];
    for (let i = 0; i < 3; i += 1) {
      const [job] = (await t.deps.queue.boss.fetch<{ calibrationId: string }>(name)) ?? [];
      expect(job).toBeDefined();
      order.push(sent[job.data.calibrationId]);
      await t.deps.queue.boss.complete(name, job.id);
    }
    expect(order).toEqual(['now', 'minute', 'hour']);
  });

  it('keeps commit order within the same second and stays inside the queue priority column', () => {
    const at = new Date(Date.UTC(2026, 11, 2, 14, 0, 0, 100));
    expect(travelerRenderPriority(at)).toBe(travelerRenderPriority(new Date(at.getTime() + 800)));
    expect(travelerRenderPriority(new Date(at.getTime() + 1000))).toBe(travelerRenderPriority(at) + 1);
    // PostgreSQL integer: -2^31 … 2^31-1 (PostgreSQL manual, 8.1.1 Integer Types).
    expect(travelerRenderPriority(new Date(Date.UTC(2200, 0, 1)))).toBe(2 ** 31 - 1);
    expect(travelerRenderPriority(new Date(Date.UTC(2020, 0, 1)))).toBe(0);
  });

  it("queues a committed calibration's traveler with its priority, and its chart update, with the calibration", async () => {
    const m = simulatedMeasurement(line.recipe.body, 'SN-PRIO-1');
    const posted = await request(t.app)
      .post('/api/station/measurements')
      .set('X-Station-Key', line.key)
      .send(m);
    expect(posted.status).toBe(202);
    const { rows: job } = await t.database.pool.query(
      `select data from pgboss.job where name = $1 and data->>'measurementPk' = (select id::text from measurements where measurement_id = $2)`,
      [queues.calibrationCompute.name, m.measurementId],
    );
    expect(job).toHaveLength(1);
    const ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
    const { calibrationId } = await computeCalibration(ctx, job[0].data);
    const { rows } = await t.database.pool.query(
      `select j.name, j.priority, j.data, c.computed_at from pgboss.job j, calibrations c
        where c.id = $1::uuid and ((j.name = $2 and j.data->>'calibrationId' = $1::text)
                          or (j.name = $3 and j.data->>'stationId' = c.station_id::text))`,
      [calibrationId, queues.travelerRender.name, queues.chartWatch.name],
    );
    const render = rows.find((r) => r.name === queues.travelerRender.name);
    expect(render?.priority).toBe(travelerRenderPriority(render!.computed_at));
    expect(rows.filter((r) => r.name === queues.chartWatch.name)).toHaveLength(1);
  });
});
