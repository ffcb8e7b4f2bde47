import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, sessionCookie, TEST_ORIGIN, type TestApp } from '#tests/harness/test-app';
import { seedDemoLine } from '../demo/demo-line.seed';
import { DRIFTING_STATION } from '../demo/demo-line.scenario';
import type { AlertView } from '#shared/schemas/alerts';
import { watchStationModel } from './alerts.service';

// A Thursday: the seeded fortnight runs from 5 to 19 November 2026.
const NOW = new Date('2026-11-19T09:30:00Z');
const FORTNIGHT_START = '2026-11-05T00:00:00.000Z';

let t: TestApp;
let engineer: string;
let alerts: AlertView[];

/** What the worker does after each calibration, for every station × model of the demo line. */
async function watchAll() {
  const { rows } = await t.database.pool.query<{ station_id: string; model_id: string }>(
    `select distinct c.station_id, u.model_id from calibrations c join units u on u.id = c.unit_id`,
  );
  let taken = 0;
  for (const r of rows) {
    const out = await watchStationModel(
      {
        db: t.deps.db,
        clock: t.deps.clock,
        logger: t.deps.logger,
        mailer: t.deps.mailer,
        publicUrl: 'http://phasewright.test',
      },
      { stationId: r.station_id, modelId: r.model_id },
    );
    taken += out.taken;
  }
  return taken;
}

beforeAll(async () => {
  t = await createTestApp();
  t.setNow(NOW);
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  const sub = await request(t.app)
    .put('/api/alerts/subscription')
    .set('Origin', TEST_ORIGIN)
    .set('Cookie', engineer)
    .send({ subscribed: true });
  expect(sub.body).toEqual({ subscribed: true });
  // The seed brings the watched charts up to date itself (its history is computed without jobs).
  const seeded = await seedDemoLine(t.deps, { units: 600, now: NOW });
  expect(seeded.chartPoints).toBeGreaterThan(500);
  alerts = (await request(t.app).get('/api/alerts').set('Origin', TEST_ORIGIN).set('Cookie', engineer)).body
    .alerts;
}, 180_000);

afterAll(async () => {
  await t?.close();
});

describe('watched charts on the demo line', () => {
  it('raises a downward EWMA alert for the drifting station within the seeded fortnight', () => {
    const drift = alerts.filter((a) => a.station === DRIFTING_STATION && a.chart === 'ewma' && a.rule === 2);
    expect(drift.length).toBeGreaterThan(0);
    for (const a of drift) {
      expect(a.raisedAt >= FORTNIGHT_START && a.raisedAt <= NOW.toISOString()).toBe(true);
      expect(a.points.length).toBeGreaterThan(0);
    }
  });

  it('keeps at most one open alert per chart and rule', () => {
    const keys = alerts.map((a) => `${a.station}|${a.model}|${a.chart}|${a.rule}`);
    expect(new Set(keys).size).toBe(keys.length);
  });

  it('takes nothing twice when the watch runs again, and writes nothing then', async () => {
    const before = await t.database.pool.query(`select id, updated_at, state from watched_charts order by id`);
    t.setNow(new Date(NOW.getTime() + 60_000));
    try {
      expect(await watchAll()).toBe(0);
    } finally {
      t.setNow(NOW);
    }
    const after = await t.database.pool.query(`select id, updated_at, state from watched_charts order by id`);
    expect(after.rows).toEqual(before.rows);
  });

  it('mails subscribed engineers about new alerts', () => {
    const mail = t.mail.messages().filter((m) => m.to.includes('evan.engineer@corvane.example'));
    expect(mail.length).toBeGreaterThan(0);
    expect(mail.some((m) => m.subject.includes(DRIFTING_STATION))).toBe(true);
  });

  it('shows a station’s open alerts to its operator', async () => {
    const operator = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
    const stationId = alerts.find((a) => a.station === DRIFTING_STATION)!.stationId;
    const res = await request(t.app)
      .get('/api/alerts')
      .query({ stationId })
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', operator);
    expect(res.status).toBe(200);
    expect(res.body.alerts.every((a: AlertView) => a.station === DRIFTING_STATION)).toBe(true);
  });
});

describe('acknowledging', () => {
  it('closes an alert with a comment, audited, and refuses a second acknowledgement', async () => {
    const alert = alerts[0];
    const short = await request(t.app)
      .post(`/api/alerts/${alert.id}/acknowledge`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .send({ comment: '' });
    expect(short.status).toBe(400);
    const ok = await request(t.app)
      .post(`/api/alerts/${alert.id}/acknowledge`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .send({ comment: 'Detector delay re-measured on the rig; recalibration booked.' });
    expect(ok.status).toBe(204);
    const again = await request(t.app)
      .post(`/api/alerts/${alert.id}/acknowledge`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .send({ comment: 'again' });
    expect(again.status).toBe(409);
    const { rows } = await t.database.pool.query(
      `select action, reason from audit_log where action = 'alerts.acknowledged' and subject_id = $1`,
      [alert.id],
    );
    expect(rows).toEqual([
      {
        action: 'alerts.acknowledged',
        reason: 'Detector delay re-measured on the rig; recalibration booked.',
      },
    ]);
    const acked = (
      await request(t.app)
        .get('/api/alerts')
        .query({ status: 'acknowledged' })
        .set('Origin', TEST_ORIGIN)
        .set('Cookie', engineer)
    ).body.alerts as AlertView[];
    expect(acked.find((a) => a.id === alert.id)).toMatchObject({
      acknowledgedBy: 'Evan Thorsby',
      status: 'acknowledged',
    });
  });
});
