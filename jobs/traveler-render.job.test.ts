import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { postAndCompute } from '#tests/harness/station-post';
import { EVENTS_CHANNEL } from '#server/modules/events/event-hub';
import { runTravelerRenders } from './traveler-render.job';
import type { WorkerDeps } from './worker-deps';

let t: TestApp;
let good: Awaited<ReturnType<typeof createLineFixture>>;
let bad: Awaited<ReturnType<typeof createLineFixture>>;
let deps: WorkerDeps;

/** Posts a measurement at the fixture's station and computes it, as the station and the worker would. */
const calibration = (line: typeof good, serial: string) =>
  postAndCompute(t, line, simulatedMeasurement(line.recipe.body, serial));

const printsOf = async (ids: string[]) => {
  const { rows } = await t.database.pool.query<{ calibration_id: string; n: number }>(
    `select calibration_id, count(*)::int as n from travelers where calibration_id = any($1::uuid[])
      group by calibration_id`,
    [ids],
  );
  return Object.fromEntries(rows.map((r) => [r.calibration_id, r.n]));
};

beforeAll(async () => {
  t = await createTestApp();
  good = await createLineFixture(t.deps.db, { code: 'TR-40' });
  bad = await createLineFixture(t.deps.db, { code: 'TR-60', stationName: 'EOL-TR-BAD' });
  // A traveler prints the model name in at most 60 characters: this model's travelers cannot be rendered.
  await t.database.pool.query('update models set name = $1 where id = $2', ['X'.repeat(70), bad.model.id]);
  deps = {
    db: t.deps.db,
    pool: t.deps.pool,
    logger: t.deps.logger,
    clock: t.deps.clock,
    queue: t.deps.queue,
  };
});
afterAll(async () => {
  await t?.close();
});

describe('traveler renders in batches', () => {
  it('stores the travelers of a batch whose other calibrations fail, each once, and fails only the bad ones', async () => {
    const ok1 = await calibration(good, 'SN-BATCH-1');
    const broken = await calibration(bad, 'SN-BATCH-2');
    const ok2 = await calibration(good, 'SN-BATCH-3');
    const missing = crypto.randomUUID();
    const batch = [ok1, broken, ok2, missing].map((calibrationId) => ({ calibrationId }));

    const first = await runTravelerRenders(deps, batch);
    expect(first[0]).toBeUndefined();
    expect(first[1]?.message).toMatch(/model/);
    expect(first[2]).toBeUndefined();
    expect(first[3]?.message).toMatch(/does not exist/);
    expect(await printsOf([ok1, broken, ok2])).toEqual({ [ok1]: 1, [ok2]: 1 });

    // A retry of the whole batch (a worker that died before completing it) stores nothing twice.
    const again = await runTravelerRenders(deps, batch);
    expect(again.map((e) => e === undefined)).toEqual([true, false, true, false]);
    expect(await printsOf([ok1, broken, ok2])).toEqual({ [ok1]: 1, [ok2]: 1 });
  });

  it('stores print 1 once when two batches holding the same calibrations run at the same time', async () => {
    const ids = [await calibration(good, 'SN-BATCH-4'), await calibration(good, 'SN-BATCH-5')];
    const [a, b] = await Promise.all([
      runTravelerRenders(
        deps,
        ids.map((calibrationId) => ({ calibrationId })),
      ),
      runTravelerRenders(
        deps,
        [...ids].reverse().map((calibrationId) => ({ calibrationId })),
      ),
    ]);
    expect([...a, ...b]).toEqual([undefined, undefined, undefined, undefined]);
    expect(await printsOf(ids)).toEqual({ [ids[0]]: 1, [ids[1]]: 1 });
  });

  it('announces each stored traveler once, naming its unit and calibration', async () => {
    const ids = [await calibration(good, 'SN-BATCH-6'), await calibration(good, 'SN-BATCH-7')];
    const listener = await t.database.pool.connect();
    const ready: { serial: string; calibrationId: string; travelerId: string }[] = [];
    listener.on('notification', (msg) => {
      const e = JSON.parse(msg.payload ?? '{}');
      if (e.type === 'traveler.ready' && ids.includes(e.calibrationId)) ready.push(e);
    });
    try {
      await listener.query(`LISTEN ${EVENTS_CHANNEL}`);
      await runTravelerRenders(
        deps,
        ids.map((calibrationId) => ({ calibrationId })),
      );
      await runTravelerRenders(
        deps,
        ids.map((calibrationId) => ({ calibrationId })),
      );
      await new Promise((r) => setTimeout(r, 200));
    } finally {
      await listener.query(`UNLISTEN ${EVENTS_CHANNEL}`);
      listener.release();
    }
    const { rows } = await t.database.pool.query<{ id: string; calibration_id: string }>(
      'select id, calibration_id from travelers where calibration_id = any($1::uuid[])',
      [ids],
    );
    expect(ready.map((e) => [e.calibrationId, e.travelerId, e.serial]).sort()).toEqual(
      rows
        .map((r) => [r.calibration_id, r.id, r.calibration_id === ids[0] ? 'SN-BATCH-6' : 'SN-BATCH-7'])
        .sort(),
    );
  });
});
