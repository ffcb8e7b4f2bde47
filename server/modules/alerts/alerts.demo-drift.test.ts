import { afterAll, beforeAll, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { seedDemoLine } from '../demo/demo-line.seed';
import { DRIFTING_STATION } from '../demo/demo-line.scenario';

// The demo exactly as `npm start` seeds it (its default size): the drift alert belongs to the drifting station
// alone. Before values entered the EWMA clipped at 3σ, single units with a rotated magnet ring (about 20° off)
// tripped the EWMA of the steady stations too.
const NOW = new Date('2026-11-19T09:30:00Z');
let t: TestApp;

beforeAll(async () => {
  t = await createTestApp();
  await seedDemoLine(t.deps, { now: NOW });
}, 600_000);

afterAll(async () => {
  await t?.close();
});

it('raises a downward EWMA (drift) alert for the drifting station and for no other', async () => {
  const { rows } = await t.database.pool.query<{ station: string }>(
    `select distinct s.name as station
     from chart_alerts a join watched_charts w on w.id = a.chart_id join stations s on s.id = w.station_id
     where w.kind = 'ewma' and a.rule = 2`,
  );
  expect(rows.map((r) => r.station)).toEqual([DRIFTING_STATION]);
});
