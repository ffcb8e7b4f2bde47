import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import type { Recipe } from '#shared/schemas/recipe';
import { computeCalibration, type MeasurementsContext } from './measurements.service';
import { forgetCachedStationKeys } from '../stations/stations.service';
import { calibrationViews } from '../read-models/calibration-views';
import type { CalibrationView } from '#shared/schemas/calibrations';
import { simulateCapture } from '#shared/simulation/capture-sim';
import { createRng } from '#shared/simulation/rng';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let other: Awaited<ReturnType<typeof createLineFixture>>;
let ctx: MeasurementsContext;
let recipe: Recipe;

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-40', polePairs: 4 });
  other = await createLineFixture(t.deps.db, { code: 'TM-60', polePairs: 6, stationName: 'EOL-OTHER' });
  ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
  recipe = line.recipe.body;
});
afterAll(async () => {
  await t?.close();
});

const post = (key: string, body: unknown) =>
  request(t.app)
    .post('/api/station/measurements')
    .set('X-Station-Key', key)
    .send(body as object);

async function count(table: string, where = 'true', params: unknown[] = []): Promise<number> {
  const { rows } = await t.database.pool.query(
    `select count(*)::int as n from ${table} where ${where}`,
    params,
  );
  return rows[0].n;
}

/** Runs the queued compute job for a measurement the way the worker would. */
async function computeQueued(measurementId: string) {
  const { rows } = await t.database.pool.query(
    `select m.id as pk, mo.active_recipe_id as recipe from measurements m join units u on u.id = m.unit_id join models mo on mo.id = u.model_id where m.measurement_id = $1`,
    [measurementId],
  );
  return computeCalibration(ctx, { measurementPk: rows[0].pk, recipeId: rows[0].recipe });
}

describe('posting a measurement', () => {
  it('stores it and enqueues its computation together, and answers 202 with the result URL', async () => {
    const m = simulatedMeasurement(recipe, 'SN-POST-1');
    const res = await post(line.key, m);
    expect(res.status).toBe(202);
    expect(res.body).toMatchObject({ measurementId: m.measurementId, status: 'queued', repeated: false });
    expect(res.headers.location).toBe(res.body.resultUrl);
    expect(await count('measurements', 'measurement_id = $1', [m.measurementId])).toBe(1);
    const [pk] = (
      await t.database.pool.query('select id from measurements where measurement_id = $1', [m.measurementId])
    ).rows;
    expect(
      await count('pgboss.job', `name = 'calibration-compute' and data->>'measurementPk' = $1`, [pk.id]),
    ).toBe(1);
  });

  it('registers an unknown serial at a single-model station', async () => {
    const m = simulatedMeasurement(recipe, 'SN-NEW-AT-STATION');
    expect((await post(line.key, m)).status).toBe(202);
    expect(await count('units', `serial = 'SN-NEW-AT-STATION' and model_id = $1`, [line.model.id])).toBe(1);
  });

  it('answers a repeated post of the same body with the same answer and stores nothing new', async () => {
    const m = simulatedMeasurement(recipe, 'SN-REPEAT');
    const first = await post(line.key, m);
    // The same JSON with its keys in another order is the same body.
    const reordered = Object.fromEntries(Object.entries(m).reverse());
    const again = await post(line.key, reordered);
    expect(again.status).toBe(202);
    expect(again.body).toEqual({ ...first.body, repeated: true });
    expect(await count('measurements', 'measurement_id = $1', [m.measurementId])).toBe(1);
    expect(
      await count(
        'pgboss.job',
        `name = 'calibration-compute' and data->>'measurementPk' = (select id::text from measurements where measurement_id = $1)`,
        [m.measurementId],
      ),
    ).toBe(1);
  });

  it('rejects a repeated measurement id with a different body with 409 and keeps the first', async () => {
    const m = simulatedMeasurement(recipe, 'SN-CONFLICT');
    await post(line.key, m);
    const changed = { ...m, serial: 'SN-CONFLICT-2' };
    const res = await post(line.key, changed);
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('measurements.id_conflict');
    const { rows } = await t.database.pool.query(
      'select serial from measurements where measurement_id = $1',
      [m.measurementId],
    );
    expect(rows).toEqual([{ serial: 'SN-CONFLICT' }]);
  });

  it('answers another station that reuses an id exactly like any id reuse, revealing nothing of the record', async () => {
    const m = simulatedMeasurement(recipe, 'SN-ID-OWNER');
    expect((await post(line.key, m)).status).toBe(202);
    // The same station repeating itself gets the same answer (idempotency).
    const repeat = await post(line.key, m);
    expect(repeat.status).toBe(202);
    expect(repeat.body).toMatchObject({ measurementId: m.measurementId, repeated: true });
    // Another station, same body or its own body for one of its units: the answer any reuse gets.
    const sameBody = await post(other.key, m);
    const ownBody = await post(
      other.key,
      simulatedMeasurement(other.recipe.body, 'SN-ID-PROBE', { measurementId: m.measurementId }),
    );
    const changedHere = await post(line.key, { ...m, serial: 'SN-ID-OWNER-2' });
    for (const res of [sameBody, ownBody, changedHere]) {
      expect(res.status).toBe(409);
      expect(res.body).toEqual(changedHere.body);
    }
    expect(JSON.stringify(sameBody.body)).not.toMatch(/SN-ID-OWNER|different|already|EOL-/);
    // Nor does the result URL tell another station that the id exists.
    const foreign = await request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result`)
      .set('X-Station-Key', other.key);
    const none = await request(t.app)
      .get('/api/station/measurements/no-such-id/result')
      .set('X-Station-Key', other.key);
    expect(foreign.status).toBe(404);
    expect(foreign.body.error.code).toBe(none.body.error.code);
  });

  it('stores exactly one measurement when two posts of the same id race on two connections', async () => {
    for (let round = 0; round < 5; round++) {
      const m = simulatedMeasurement(recipe, `SN-RACE-${round}`, { seed: round });
      const [a, b] = await Promise.all([post(line.key, m), post(line.key, m)]);
      expect([a.status, b.status]).toEqual([202, 202]);
      expect(a.body.measurementId).toBe(b.body.measurementId);
      expect(a.body.resultUrl).toBe(b.body.resultUrl);
      expect([a.body.repeated, b.body.repeated].sort()).toEqual([false, true]);
      expect(await count('measurements', 'measurement_id = $1', [m.measurementId])).toBe(1);
    }
  });

  it('names every problem of a malformed body with its path (400)', async () => {
    const m = simulatedMeasurement(recipe, 'SN-BAD');
    const bad = structuredClone(m) as unknown as {
      segments: { hallEdges: object[]; bemfCrossings: object[] }[];
    };
    bad.segments[0].hallEdges[0] = { sensor: 'D', edge: 'rise', us: 'soon' };
    bad.segments[0].bemfCrossings[1] = { channel: 'XY', edge: 'fall', us: 5 };
    const res = await post(line.key, bad);
    expect(res.status).toBe(400);
    const paths = res.body.error.issues.map((i: { path: string }) => i.path);
    expect(paths).toEqual(
      expect.arrayContaining([
        'segments.0.hallEdges.0.sensor',
        'segments.0.hallEdges.0.us',
        'segments.0.bemfCrossings.1.channel',
      ]),
    );
    expect(await count('measurements', `serial = 'SN-BAD'`)).toBe(0);
  });

  it('refuses unsorted times as unusable input, not as a unit failure', async () => {
    const m = simulatedMeasurement(recipe, 'SN-UNSORTED');
    const edges = m.segments[0].hallEdges;
    [edges[2], edges[3]] = [edges[3], edges[2]];
    const res = await post(line.key, m);
    expect(res.status).toBe(400);
    expect(res.body.error.issues.length).toBeGreaterThan(0);
    expect(await count('units', `serial = 'SN-UNSORTED'`)).toBe(0);
  });

  it('refuses a body over 2 MB with 413', async () => {
    const m = simulatedMeasurement(recipe, 'SN-HUGE');
    const res = await post(line.key, { ...m, padding: 'x'.repeat(2.2 * 1024 * 1024) });
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('request.too_large');
  });

  it('refuses a wrong or revoked key with 401', async () => {
    const m = simulatedMeasurement(recipe, 'SN-KEY');
    expect((await post('pwsk_not-a-key', m)).status).toBe(401);
    const admin = await request(t.app)
      .post('/api/auth/sign-in')
      .send({ username: 'ada.admin', password: 'demo-admin-pass' });
    const cookie = (admin.headers['set-cookie'] as unknown as string[])[0].split(';')[0];
    const created = await request(t.app)
      .post(`/api/admin/stations/${line.station.id}/keys`)
      .set('Origin', TEST_ORIGIN).set('Cookie', cookie)
      .send({ label: 'rotation' });
    expect(created.status).toBe(201);
    expect((await post(created.body.key, simulatedMeasurement(recipe, 'SN-KEY-2'))).status).toBe(202);
    const revoked = await request(t.app)
      .post(`/api/admin/stations/${line.station.id}/keys/${created.body.id}/revoke`)
      .set('Origin', TEST_ORIGIN).set('Cookie', cookie);
    expect(revoked.status).toBe(204);
    const after = await post(created.body.key, simulatedMeasurement(recipe, 'SN-KEY-3'));
    expect(after.status).toBe(401);
    expect(after.body.error.code).toBe('station.key_invalid');
    // The station's other key still works during the rotation.
    expect((await post(line.key, simulatedMeasurement(recipe, 'SN-KEY-4'))).status).toBe(202);
  });

  it('marks the station seen and the key used when a key is presented, and a revoked key neither', async () => {
    const pool = t.database.ownerPool();
    await pool.query(`update stations set last_seen_at = null where id = $1`, [other.station.id]);
    await pool.query(`update station_keys set last_used_at = null where station_id = $1`, [other.station.id]);
    forgetCachedStationKeys();
    const beat = await request(t.app).post('/api/station/heartbeat').set('X-Station-Key', other.key);
    expect(beat.status).toBe(200);
    const seen = await pool.query(
      `select s.last_seen_at is not null as seen, k.last_used_at is not null as used
         from stations s join station_keys k on k.station_id = s.id where s.id = $1`,
      [other.station.id],
    );
    expect(seen.rows).toEqual([{ seen: true, used: true }]);
    await pool.query(`update stations set last_seen_at = null where id = $1`, [other.station.id]);
    await pool.query(`update station_keys set last_used_at = null, revoked_at = now() where station_id = $1`, [
      other.station.id,
    ]);
    forgetCachedStationKeys();
    expect((await request(t.app).post('/api/station/heartbeat').set('X-Station-Key', other.key)).status).toBe(401);
    const unseen = await pool.query(
      `select s.last_seen_at is null as unseen, k.last_used_at is null as unused
         from stations s join station_keys k on k.station_id = s.id where s.id = $1`,
      [other.station.id],
    );
    expect(unseen.rows).toEqual([{ unseen: true, unused: true }]);
    await pool.query(`update station_keys set revoked_at = null where station_id = $1`, [other.station.id]);
    forgetCachedStationKeys();
  });
});

describe('stations stay in their own lane', () => {
  it('station B cannot post for a unit of a model it is not set up for', async () => {
    await post(line.key, simulatedMeasurement(recipe, 'SN-LANE-A'));
    const res = await post(other.key, simulatedMeasurement(other.recipe.body, 'SN-LANE-A'));
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('stations.model_not_allowed');
  });

  it("station B cannot read or confirm station A's measurement", async () => {
    const m = simulatedMeasurement(recipe, 'SN-LANE-B');
    await post(line.key, m);
    await computeQueued(m.measurementId);
    const read = await request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result`)
      .set('X-Station-Key', other.key);
    expect(read.status).toBe(404);
    const confirm = await request(t.app)
      .post(`/api/station/measurements/${m.measurementId}/programming`)
      .set('X-Station-Key', other.key)
      .send({ writtenCounts: 1, readBackCounts: 1 });
    expect(confirm.status).toBe(404);
    const own = await request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result`)
      .set('X-Station-Key', line.key);
    expect(own.status).toBe(200);
    expect(own.body.status).toBe('computed');
  });
});

describe('results', () => {
  it('recovers the simulated offset and reports it in degrees and counts', async () => {
    const m = simulatedMeasurement(recipe, 'SN-RESULT', { offsetDeg: 4.2 });
    await post(line.key, m);
    await computeQueued(m.measurementId);
    const res = await request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result`)
      .set('X-Station-Key', line.key);
    const cal = res.body.calibration;
    expect(cal.verdict).toBe('pass');
    expect(cal.offsetDeg).toBeCloseTo(4.2, 1);
    // 65536 counts per electrical turn: counts = round(deg / 360 × 65536).
    expect(cal.offsetCounts).toBe(Math.round((cal.offsetDeg / 360) * 65536));
    const unit = await request(t.app)
      .get('/api/units/SN-RESULT')
      .set('Origin', TEST_ORIGIN).set('Cookie', await cookieOf('olga.operator', 'demo-operator-pass'));
    expect(unit.body.unit).toMatchObject({
      status: 'calibrated',
      currentOffsetCounts: cal.offsetCounts,
      attempts: 1,
    });
  });

  it('long-polls: the result arrives the moment the calibration commits', async () => {
    const m = simulatedMeasurement(recipe, 'SN-LONGPOLL');
    await post(line.key, m);
    const started = Date.now();
    const waiting = request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result?waitMs=15000`)
      .set('X-Station-Key', line.key);
    const pending = waiting.then((r) => r);
    await new Promise((r) => setTimeout(r, 400));
    await computeQueued(m.measurementId);
    const res = await pending;
    const elapsed = Date.now() - started;
    expect(res.body.status).toBe('computed');
    expect(elapsed).toBeGreaterThanOrEqual(400);
    expect(elapsed).toBeLessThan(5000);
  });

  it("answers a station's result exactly as the unit's page shows that calibration: programming, a hold, the last attempt", async () => {
    const sameAsPage = async (measurementId: string) => {
      const res = await request(t.app)
        .get(`/api/station/measurements/${measurementId}/result?waitMs=0`)
        .set('X-Station-Key', line.key);
      expect(res.body.status).toBe('computed');
      const [onPage] = await calibrationViews(t.deps.db, { measurementId, purpose: 'station', limit: 1 });
      expect(res.body.calibration).toEqual(onPage);
      return res.body.calibration as CalibrationView;
    };
    // A pass, programmed and confirmed.
    const good = simulatedMeasurement(recipe, 'SN-SAME-VIEW', { offsetDeg: 2, seed: 41 });
    await post(line.key, good);
    await computeQueued(good.measurementId);
    const passed = await sameAsPage(good.measurementId);
    expect(passed.programming.status).toBe('pending');
    await request(t.app)
      .post(`/api/station/measurements/${good.measurementId}/programming`)
      .set('X-Station-Key', line.key)
      .send({ writtenCounts: passed.offsetCounts, readBackCounts: passed.offsetCounts, checksum: 'ab12' })
      .expect(200);
    expect((await sameAsPage(good.measurementId)).programming.status).toBe('confirmed');
    // Failed attempts up to the hold: the last one names the hold, an earlier one does not.
    const fails = [];
    for (let i = 1; i <= recipe.maxAttempts; i++) {
      const m = simulatedMeasurement(recipe, 'SN-SAME-HOLD', { offsetDeg: 18, seed: 300 + i });
      await post(line.key, m);
      await computeQueued(m.measurementId);
      fails.push(m.measurementId);
    }
    expect((await sameAsPage(fails.at(-1)!)).nextAction).toMatch(/on hold/);
    expect((await sameAsPage(fails[0])).nextAction).not.toMatch(/on hold/);
  });

  it('answers pending when nothing commits within waitMs', async () => {
    const m = simulatedMeasurement(recipe, 'SN-PENDING');
    await post(line.key, m);
    const res = await request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result?waitMs=300`)
      .set('X-Station-Key', line.key);
    expect(res.body).toEqual({ measurementId: m.measurementId, status: 'pending', calibration: null });
  });

  it('computes a measurement once even when the job runs twice at the same time', async () => {
    const m = simulatedMeasurement(recipe, 'SN-TWICE');
    await post(line.key, m);
    const [a, b] = await Promise.all([computeQueued(m.measurementId), computeQueued(m.measurementId)]);
    expect(a.calibrationId).toBe(b.calibrationId);
    expect([a.created, b.created].sort()).toEqual([false, true]);
    expect(
      await count('calibrations c join measurements m on m.id = c.measurement_pk', 'm.measurement_id = $1', [
        m.measurementId,
      ]),
    ).toBe(1);
    expect(await count('units', `serial = 'SN-TWICE' and attempts = 1`)).toBe(1);
  });

  it('numbers two attempts of one unit computed at the same moment 1 and 2, and counts both', async () => {
    // Offset 18° is just outside the test recipe's ±15° window: two failed attempts, no hold yet.
    const first = simulatedMeasurement(recipe, 'SN-RACE', { offsetDeg: 18, seed: 201 });
    const second = simulatedMeasurement(recipe, 'SN-RACE', { offsetDeg: 18, seed: 202 });
    expect((await post(line.key, first)).status).toBe(202);
    expect((await post(line.key, second)).status).toBe(202);
    // Both jobs read the unit before either commits (a third connection holds the unit's row until both
    // wait on it); the second commit must not reuse attempt 1.
    const blocker = await t.database.pool.connect();
    await blocker.query('begin');
    await blocker.query(`select 1 from units where serial = 'SN-RACE' for update`);
    const both = Promise.all([computeQueued(first.measurementId), computeQueued(second.measurementId)]);
    // Asked outside the blocker's transaction, which would keep seeing its first snapshot of the activity.
    for (let waiting = 0; waiting < 2; ) {
      await new Promise((r) => setTimeout(r, 20));
      const { rows } = await t.database.pool.query(
        `select count(*)::int as n from pg_stat_activity where datname = current_database() and wait_event_type = 'Lock'`,
      );
      waiting = rows[0].n;
    }
    await blocker.query('rollback');
    blocker.release();
    await both;
    const { rows } = await t.database.pool.query(
      `select c.attempt from calibrations c join units u on u.id = c.unit_id where u.serial = 'SN-RACE' order by c.attempt`,
    );
    expect(rows.map((r) => r.attempt)).toEqual([1, 2]);
    expect(await count('units', `serial = 'SN-RACE' and attempts = 2 and status = 'failed'`)).toBe(1);
  });

  it('records a confirmation that matches the computed counts once, with its event, and shows it confirmed', async () => {
    const m = simulatedMeasurement(recipe, 'SN-PROGRAM-OK');
    await post(line.key, m);
    await computeQueued(m.measurementId);
    const events: string[] = [];
    const stop = t.deps.events.subscribe((e) => {
      if (e.type === 'programming.confirmed') events.push(JSON.stringify(e));
    });
    try {
      const res = await request(t.app)
        .get(`/api/station/measurements/${m.measurementId}/result`)
        .set('X-Station-Key', line.key);
      const counts = res.body.calibration.offsetCounts as number;
      const ok = await request(t.app)
        .post(`/api/station/measurements/${m.measurementId}/programming`)
        .set('X-Station-Key', line.key)
        .send({ writtenCounts: counts, readBackCounts: counts, checksum: 'C3D4' });
      expect(ok.status).toBe(200);
      expect(ok.body).toMatchObject({ matches: true, expectedCounts: counts });
      const rows = await t.database.pool.query(
        `select p.matches, p.expected_counts, p.checksum from programming_confirmations p
           join calibrations c on c.id = p.calibration_id join measurements m on m.id = c.measurement_pk
          where m.measurement_id = $1`,
        [m.measurementId],
      );
      expect(rows.rows).toEqual([{ matches: true, expected_counts: counts, checksum: 'C3D4' }]);
      const after = await request(t.app)
        .get(`/api/station/measurements/${m.measurementId}/result`)
        .set('X-Station-Key', line.key);
      expect(after.body.calibration.programming.status).toBe('confirmed');
      // The event comes back through the database's NOTIFY.
      for (let i = 0; i < 50 && !events.length; i++) await new Promise((r) => setTimeout(r, 20));
      expect(events.map((e) => JSON.parse(e))).toEqual([
        expect.objectContaining({ type: 'programming.confirmed', serial: 'SN-PROGRAM-OK', matches: true }),
      ]);
    } finally {
      stop();
    }
    // Another station cannot confirm it.
    const foreign = await request(t.app)
      .post(`/api/station/measurements/${m.measurementId}/programming`)
      .set('X-Station-Key', other.key)
      .send({ writtenCounts: 1, readBackCounts: 1 });
    expect(foreign.status).toBe(404);
  });

  it('flags the unit when the value read back differs from the one computed', async () => {
    const m = simulatedMeasurement(recipe, 'SN-PROGRAM');
    await post(line.key, m);
    await computeQueued(m.measurementId);
    const res = await request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result`)
      .set('X-Station-Key', line.key);
    const counts = res.body.calibration.offsetCounts as number;
    const ok = await request(t.app)
      .post(`/api/station/measurements/${m.measurementId}/programming`)
      .set('X-Station-Key', line.key)
      .send({ writtenCounts: counts, readBackCounts: counts, checksum: 'A1B2' });
    expect(ok.body.matches).toBe(true);
    expect(await count('units', `serial = 'SN-PROGRAM' and not programming_mismatch`)).toBe(1);
    const bad = await request(t.app)
      .post(`/api/station/measurements/${m.measurementId}/programming`)
      .set('X-Station-Key', line.key)
      .send({ writtenCounts: counts, readBackCounts: counts + 7 });
    expect(bad.body.matches).toBe(false);
    expect(await count('units', `serial = 'SN-PROGRAM' and programming_mismatch`)).toBe(1);
    const after = await request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result`)
      .set('X-Station-Key', line.key);
    expect(after.body.calibration.programming.status).toBe('mismatch');
  });

  it('sends a unit whose offset is far outside its limits to repair at once instead of retesting it', async () => {
    // 40° against a ±15° window is 25° out, more than a quarter of the window: built into the unit.
    const m = simulatedMeasurement(recipe, 'SN-FAR', { offsetDeg: 40, seed: 77 });
    expect((await post(line.key, m)).status).toBe(202);
    await computeQueued(m.measurementId);
    const { rows } = await t.database.pool.query(
      `select status, attempts, hold_reason from units where serial = 'SN-FAR'`,
    );
    expect(rows[0]).toMatchObject({ status: 'on_hold', attempts: 1 });
    expect(rows[0].hold_reason).toMatch(/repair/);
    const view = await request(t.app)
      .get('/api/units/SN-FAR')
      .set('Cookie', await cookieOf('olga.operator', 'demo-operator-pass'));
    expect(view.body.calibrations[0].nextAction).toMatch(/^Do not retest: the offset is far outside/);
    expect(view.body.calibrations[0].nextAction).not.toMatch(/Retest|reseat/);
  });

  it("puts a unit on hold after the recipe's maximum failed attempts and refuses further measurements", async () => {
    // Offset 18° is just outside the test recipe's ±15° window: a unit failure a retest may mend.
    for (let i = 1; i <= recipe.maxAttempts; i++) {
      const m = simulatedMeasurement(recipe, 'SN-HOLD', { offsetDeg: 18, seed: 100 + i });
      expect((await post(line.key, m)).status).toBe(202);
      await computeQueued(m.measurementId);
    }
    const { rows } = await t.database.pool.query(
      `select status, attempts, hold_reason from units where serial = 'SN-HOLD'`,
    );
    expect(rows[0]).toMatchObject({ status: 'on_hold', attempts: recipe.maxAttempts });
    expect(rows[0].hold_reason).toMatch(/3 calibration attempts/);
    const view = await request(t.app)
      .get('/api/units/SN-HOLD')
      .set('Origin', TEST_ORIGIN).set('Cookie', await cookieOf('olga.operator', 'demo-operator-pass'));
    expect(view.body.calibrations[0].nextAction).toMatch(/No attempts left \(3 of 3\).*on hold/);
    expect(view.body.calibrations[1].nextAction).toMatch(/attempt 3 of 3/);
    const refused = await post(
      line.key,
      simulatedMeasurement(recipe, 'SN-HOLD', { offsetDeg: 2, seed: 999 }),
    );
    expect(refused.status).toBe(409);
    expect(refused.body.error.code).toBe('units.on_hold');
  });
});

describe('records that must not change', () => {
  it('the database refuses UPDATE and DELETE on measurements and calibrations', async () => {
    const m = simulatedMeasurement(recipe, 'SN-IMMUTABLE');
    await post(line.key, m);
    await computeQueued(m.measurementId);
    for (const table of ['measurements', 'calibrations']) {
      // The triggers refuse even the owner role; the app role has no UPDATE or DELETE at all.
      const owner = t.database.ownerPool();
      await expect(owner.query(`update ${table} set id = id`)).rejects.toThrow(/append-only/);
      await expect(owner.query(`delete from ${table}`)).rejects.toThrow(/append-only/);
      await expect(t.database.pool.query(`update ${table} set id = id`)).rejects.toThrow(/permission denied/);
      await expect(t.database.pool.query(`delete from ${table}`)).rejects.toThrow(/permission denied/);
    }
  });

  it('a released recipe version cannot be edited, only retired', async () => {
    await expect(
      t.database.pool.query(`update recipes set body = jsonb_set(body, '{maxAttempts}', '9') where id = $1`, [
        line.recipe.id,
      ]),
    ).rejects.toThrow(/immutable/);
    // Deleting is refused by the trigger even for the owner role (the app role may not delete recipes).
    await expect(
      t.database.ownerPool().query('delete from recipes where id = $1', [line.recipe.id]),
    ).rejects.toThrow(/cannot be deleted/);
  });
});

const cookieOf = (username: string, password: string) => sessionCookie(t.app, username, password);

describe('sampled captures', () => {
  it('turns an uploaded CSV capture into a measurement, keeps the CSV verbatim and recovers the offset', async () => {
    const { csv } = simulateCapture(
      {
        polePairs: recipe.polePairs,
        hallRiseDeg: recipe.hallRiseDeg,
        offsetDeg: -5,
        direction: 'forward',
        profile: { kind: 'constant', speedRpm: 1500 },
        electricalTurns: 12,
        keVPerKrpm: 6,
        sampleRateHz: 200_000,
        noiseV: 0.01,
        channels: 'line',
      },
      createRng(11),
    );
    const res = await request(t.app)
      .post('/api/station/captures')
      .set('X-Station-Key', line.key)
      .field('measurementId', 'cap-1')
      .field('serial', 'SN-CAPTURE')
      .attach('capture', Buffer.from(csv), 'capture.csv');
    expect(res.status).toBe(202);
    const { rows } = await t.database.pool.query(
      `select source, payload_raw from measurements where measurement_id = 'cap-1'`,
    );
    expect(rows[0].source).toBe('capture');
    expect(rows[0].payload_raw).toBe(csv);
    await computeQueued('cap-1');
    const result = await request(t.app)
      .get('/api/station/measurements/cap-1/result')
      .set('X-Station-Key', line.key);
    expect(result.body.calibration.verdict).toBe('pass');
    expect(result.body.calibration.offsetDeg).toBeCloseTo(-5, 0);
    expect(result.body.calibration.result.capture.keVPerKrpmPeak).toBeGreaterThan(0);
  });

  it('rejects a CSV without the needed columns with a clear 400 and stores nothing', async () => {
    const res = await request(t.app)
      .post('/api/station/captures')
      .set('X-Station-Key', line.key)
      .field('measurementId', 'cap-bad')
      .field('serial', 'SN-CAPTURE-BAD')
      .attach('capture', Buffer.from('time_s,foo\n0,1\n1,2\n'), 'capture.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/column|header|time_s/i);
    expect(await count('measurements', `measurement_id = 'cap-bad'`)).toBe(0);
  });
});

describe('recomputation by an engineer', () => {
  it('adds an analysis-only calibration with another recipe version and leaves the unit as it was', async () => {
    const m = simulatedMeasurement(recipe, 'SN-RECOMPUTE', { offsetDeg: 4.2 });
    await post(line.key, m);
    await computeQueued(m.measurementId);
    // Version 2 of the recipe tightened the offset window to ±2°: the same unit would now fail. (It was
    // released once and is retired now: only one version of a model is in force at a time.)
    const v2body = { ...recipe, limits: { ...recipe.limits, offsetDeg: [-2, 2] as [number, number] } };
    const { rows: v2 } = await t.database.pool.query(
      `insert into recipes (model_id, version, status, body, released_at, retired_at) values ($1, 2, 'retired', $2, now(), now()) returning id`,
      [line.model.id, JSON.stringify(v2body)],
    );
    const engineer = await cookieOf('evan.engineer', 'demo-engineer-pass');
    const asked = await request(t.app)
      .post(`/api/measurements/${m.measurementId}/recompute`)
      .set('Origin', TEST_ORIGIN).set('Cookie', engineer)
      .send({ recipeId: v2[0].id, reason: 'what if the window were ±2°' });
    expect(asked.status).toBe(202);
    expect(asked.body).toMatchObject({ status: 'queued', recipe: { version: 2 } });
    const { rows: jobs } = await t.database.pool.query(
      `select data from pgboss.job where name = 'calibration-compute' and data ? 'recompute' order by created_on desc limit 1`,
    );
    const ctxNow = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
    await computeCalibration(ctxNow, jobs[0].data);
    await computeCalibration(ctxNow, jobs[0].data); // a retry adds nothing

    const unit = await request(t.app).get('/api/units/SN-RECOMPUTE').set('Origin', TEST_ORIGIN).set('Cookie', engineer);
    const purposes = unit.body.calibrations.map(
      (c: { purpose: string; verdict: string }) => `${c.purpose}:${c.verdict}`,
    );
    expect(purposes.sort()).toEqual(['recompute:fail', 'station:pass']);
    expect(unit.body.unit).toMatchObject({ status: 'calibrated', attempts: 1 });
    const station = await request(t.app)
      .get(`/api/station/measurements/${m.measurementId}/result`)
      .set('X-Station-Key', line.key);
    expect(station.body.calibration).toMatchObject({ purpose: 'station', verdict: 'pass' });

    const again = await request(t.app)
      .post(`/api/measurements/${m.measurementId}/recompute`)
      .set('Origin', TEST_ORIGIN).set('Cookie', engineer)
      .send({ recipeId: v2[0].id, reason: 'once more' });
    expect(again.status).toBe(200);
    expect(again.body.status).toBe('computed');
    const { rows: audit } = await t.database.pool.query(
      `select reason from audit_log where action = 'calibrations.recomputed'`,
    );
    expect(audit).toEqual([{ reason: 'what if the window were ±2°' }]);
  });

  it('refuses a recipe of another model', async () => {
    const m = simulatedMeasurement(recipe, 'SN-RECOMPUTE-2');
    await post(line.key, m);
    const engineer = await cookieOf('evan.engineer', 'demo-engineer-pass');
    const res = await request(t.app)
      .post(`/api/measurements/${m.measurementId}/recompute`)
      .set('Origin', TEST_ORIGIN).set('Cookie', engineer)
      .send({ recipeId: other.recipe.id, reason: 'wrong model' });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('recipes.not_usable');
  });
});
