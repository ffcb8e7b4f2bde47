import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { createDatabase, type Database } from './client';
import { createTestDatabase, type TestDatabase } from '#tests/harness/db';
import { createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { computeCalibration } from '../modules/measurements/measurements.service';

// The harness (tests/harness/global-setup.ts) keeps a hot standby of the test server, made with
// `pg_basebackup -R` and fed by streaming replication on loopback. Here the app is wired as under
// DATABASE_READ_URL: statistics, containment searches and exports read from the standby, the station
// path from the primary. Pausing the standby's replay shows which side each answer came from.
const replicaAppUrl = inject('replicaAppUrl');
const replicaError = inject('replicaError');
const external = replicaError.startsWith('the test server is external');

let primary: TestDatabase;
let replica: Database;
let standby: pg.Client;
let t: TestApp;
let quality: string;
let line: Awaited<ReturnType<typeof createLineFixture>>;

/** Waits until the standby has replayed everything the primary has written so far. */
async function standbyCaughtUp(limitMs = 15_000) {
  const { rows } = await primary.pool.query<{ lsn: string }>('select pg_current_wal_lsn()::text as lsn');
  const t0 = Date.now();
  for (;;) {
    const r = await standby.query<{ ok: boolean }>('select pg_last_wal_replay_lsn() >= $1::pg_lsn as ok', [
      rows[0].lsn,
    ]);
    if (r.rows[0].ok) return Date.now() - t0;
    if (Date.now() - t0 > limitMs)
      throw new Error(`the standby did not replay ${rows[0].lsn} within ${limitMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

describe.skipIf(external)('heavy reads from a read replica (DATABASE_READ_URL)', () => {
  beforeAll(async () => {
    if (!replicaAppUrl) throw new Error(`the test harness has no standby: ${replicaError}`);
    standby = new pg.Client({ connectionString: inject('replicaSuperuserUrl') });
    await standby.connect();
    primary = await createTestDatabase();
    await standbyCaughtUp();
    const url = new URL(replicaAppUrl);
    url.pathname = `/${primary.name}`;
    replica = createDatabase(url.toString(), { max: 2, applicationName: 'phasewright-test-read' });
    t = await createTestApp({ database: primary, readDatabase: replica });
    line = await createLineFixture(t.deps.db);
    quality = await sessionCookie(t.app, 'quinn.quality', 'demo-quality-pass');
  });

  afterAll(async () => {
    // Never leave the shared standby paused.
    await standby?.query('select pg_wal_replay_resume()').catch(() => {});
    await standby?.end();
    await replica?.close();
    await t?.close();
  });

  it('reads statistics over a connection to the standby, and writes over one to the primary', async () => {
    const read = await t.deps.readPool.query<{ standby: boolean; port: number; app: string }>(
      `select pg_is_in_recovery() as standby, current_setting('port')::int as port, current_setting('application_name') as app`,
    );
    expect(read.rows[0]).toEqual({
      standby: true,
      port: Number(new URL(replicaAppUrl).port),
      app: 'phasewright-test-read',
    });
    const write = await t.deps.pool.query<{ standby: boolean }>('select pg_is_in_recovery() as standby');
    expect(write.rows[0].standby).toBe(false);
    // The standby sees its reader as a client of its own.
    const seen = await standby.query(
      `select 1 from pg_stat_activity where application_name = 'phasewright-test-read' and datname = $1`,
      [primary.name],
    );
    expect(seen.rowCount).toBeGreaterThan(0);
  });

  it('shows a unit calibrated on the primary in the statistics and the containment search once the standby has replayed it', async () => {
    await standbyCaughtUp();
    await standby.query('select pg_wal_replay_pause()');
    const m = simulatedMeasurement(line.recipe.body, 'SN-REPLICA-1');
    const posted = await request(t.app)
      .post('/api/station/measurements')
      .set('X-Station-Key', line.key)
      .send(m);
    expect(posted.status).toBe(202);
    const { rows } = await primary.pool.query<{ pk: string }>(
      'select id as pk from measurements where measurement_id = $1',
      [m.measurementId],
    );
    await computeCalibration(
      { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock },
      { measurementPk: rows[0].pk, recipeId: line.recipe.id },
    );

    // The station path reads the primary: its result is there while the standby stands still.
    const result = await request(t.app).get(posted.body.resultUrl).set('X-Station-Key', line.key);
    expect(result.status).toBe(200);
    expect(result.body.status).toBe('computed');
    expect(result.body.calibration.verdict).toBe('pass');

    const search = () =>
      request(t.app).get('/api/quality/units').query({ serialPrefix: 'SN-REPLICA' }).set('Cookie', quality);
    const stations = async () =>
      (
        await request(t.app)
          .get('/api/analysis/options')
          .query({ model: line.model.id })
          .set('Cookie', quality)
      ).body.stations as { name: string }[];
    expect((await search()).body.total).toBe(0);
    expect(await stations()).toEqual([]);

    await standby.query('select pg_wal_replay_resume()');
    await standbyCaughtUp();
    expect((await search()).body.total).toBe(1);
    expect((await stations()).map((s) => s.name)).toEqual([line.station.name]);
    const csv = await request(t.app)
      .get('/api/quality/units.csv')
      .query({ serialPrefix: 'SN-REPLICA' })
      .set('Cookie', quality);
    expect(csv.text).toContain('SN-REPLICA-1');
  });
});
