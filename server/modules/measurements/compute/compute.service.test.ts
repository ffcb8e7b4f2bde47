import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import type { MeasurementsContext } from '../measurements.context';
import { computeCalibrations } from './compute.service';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let ctx: MeasurementsContext;

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-BATCH' });
  ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
});
afterAll(async () => {
  await t?.close();
});

/** Posts a measurement of `serial` and answers the job the worker would fetch for it. */
async function posted(serial: string, seed: number) {
  const m = simulatedMeasurement(line.recipe.body, serial, { seed });
  const res = await request(t.app).post('/api/station/measurements').set('X-Station-Key', line.key).send(m);
  expect(res.status).toBe(202);
  const { rows } = await t.database.pool.query<{ id: string }>(
    'select id from measurements where measurement_id = $1',
    [m.measurementId],
  );
  return { measurementPk: rows[0].id, recipeId: line.recipe.id };
}

describe("a worker's batch of calibration jobs", () => {
  it('computes each job of the batch, fails a job whose measurement is gone alone, and makes one calibration of a job fetched twice', async () => {
    const a = await posted('SN-BATCH-A', 1);
    const b = await posted('SN-BATCH-B', 2);
    const gone = { measurementPk: '00000000-0000-4000-8000-000000000000', recipeId: line.recipe.id };
    const out = await computeCalibrations(ctx, [a, gone, b, { ...a }]);

    expect(out).toHaveLength(4);
    expect(out[1]).toBeInstanceOf(Error);
    expect((out[1] as Error).message).toContain('does not exist');
    const [ca, cb, ca2] = [out[0], out[2], out[3]] as { calibrationId: string; created: boolean }[];
    expect(ca.calibrationId).toBe(ca2.calibrationId);
    expect([ca.created, ca2.created].sort()).toEqual([false, true]);
    expect(cb.created).toBe(true);

    const { rows } = await t.database.pool.query<{ serial: string; n: number; attempts: number }>(
      `select u.serial, count(c.id)::int as n, u.attempts from units u join calibrations c on c.unit_id = u.id
        where u.serial like 'SN-BATCH-%' group by u.serial, u.attempts order by u.serial`,
    );
    // One calibration a measurement, and each unit counted one attempt, however the batch ran.
    expect(rows).toEqual([
      { serial: 'SN-BATCH-A', n: 1, attempts: 1 },
      { serial: 'SN-BATCH-B', n: 1, attempts: 1 },
    ]);

    // The same jobs again (a retried batch): nothing new.
    const again = await computeCalibrations(ctx, [a, b]);
    expect(again).toEqual([
      { calibrationId: ca.calibrationId, created: false },
      { calibrationId: cb.calibrationId, created: false },
    ]);
  });
});
