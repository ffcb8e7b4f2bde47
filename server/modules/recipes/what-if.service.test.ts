import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, sessionCookie, TEST_ORIGIN, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { computeCalibration } from '../measurements/measurements.service';
import type { RecipeVersionView, WhatIfRunView } from '#shared/schemas/recipes';
import { runWhatIf } from './what-if.service';

let t: TestApp;
let evan = '';
let rosa = '';
let line: Awaited<ReturnType<typeof createLineFixture>>;
let draft: RecipeVersionView;
const ctx = () => ({ db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock });

// True hall offsets of the past units (electrical degrees). Version 1 accepts ±15 °e, the draft ±5 °e:
// the four outside ±5 °e would now fail, the one at 40 °e failed already and still fails.
const OFFSETS = [-12, -8, -3, 0, 2, 4, 9, 13, 40];
const NOW_FAILING = ['WI-00', 'WI-01', 'WI-06', 'WI-07'];

beforeAll(async () => {
  t = await createTestApp();
  evan = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  rosa = await sessionCookie(t.app, 'rosa.engineer', 'demo-engineer2-pass');
  line = await createLineFixture(t.deps.db, { code: 'WI-1' });
  for (const [i, offsetDeg] of OFFSETS.entries()) {
    const m = simulatedMeasurement(line.recipe.body, `WI-${String(i).padStart(2, '0')}`, {
      offsetDeg,
      seed: i + 1,
    });
    expect(
      (await request(t.app).post('/api/station/measurements').set('X-Station-Key', line.key).send(m)).status,
    ).toBe(202);
    const { rows } = await t.database.pool.query('select id from measurements where measurement_id = $1', [
      m.measurementId,
    ]);
    await computeCalibration(ctx(), { measurementPk: rows[0].id, recipeId: line.recipe.id });
  }
  const copy = await request(t.app)
    .post(`/api/models/${line.model.id}/recipes`)
    .set('Origin', TEST_ORIGIN)
    .set('Cookie', evan)
    .send({ fromRecipeId: line.recipe.id });
  const saved = await request(t.app)
    .patch(`/api/recipes/${copy.body.id}`)
    .set('Origin', TEST_ORIGIN)
    .set('Cookie', evan)
    .send({
      body: { ...copy.body.body, limits: { ...copy.body.body.limits, offsetDeg: [-5, 5] } },
      revision: 1,
    });
  expect(saved.status).toBe(200);
  draft = saved.body;
});
afterAll(async () => {
  await t?.close();
});

async function whatIf(recipeId: string, filters?: object): Promise<WhatIfRunView> {
  const started = await request(t.app)
    .post(`/api/recipes/${recipeId}/what-if`)
    .set('Origin', TEST_ORIGIN)
    .set('Cookie', evan)
    .send(filters ? { filters } : {});
  expect(started.status).toBe(202);
  expect(started.body).toMatchObject({ status: 'queued', filters: { lastUnits: 1000 } });
  await runWhatIf(ctx(), started.body.id);
  return (
    await request(t.app).get(`/api/what-if/${started.body.id}`).set('Origin', TEST_ORIGIN).set('Cookie', evan)
  ).body;
}

/** A fingerprint of every row of the tables a what-if must never touch. */
async function fingerprint() {
  const out: Record<string, string> = {};
  for (const table of [
    'units',
    'measurements',
    'calibrations',
    'travelers',
    'programming_confirmations',
    'recipes',
    'models',
  ]) {
    const { rows } = await t.database.pool.query(
      `select count(*)::int as n, md5(coalesce(string_agg(x::text, '|' order by x::text), '')) as h from ${table} x`,
    );
    out[table] = `${rows[0].n}:${rows[0].h}`;
  }
  return out;
}

describe('what-if on past units', () => {
  it('counts the verdicts that would change, names the check that causes it and lists the units', async () => {
    const run = await whatIf(draft.id);
    expect(run.status).toBe('done');
    expect(run.processed).toBe(OFFSETS.length);
    expect(run.summary).toMatchObject({
      measurements: OFFSETS.length,
      passToFail: NOW_FAILING.length,
      failToPass: 0,
      unchanged: OFFSETS.length - NOW_FAILING.length,
      unusable: 0,
      causes: [
        { code: 'offset.within_limits', label: 'Offset within its window', count: NOW_FAILING.length },
      ],
    });
    expect(run.summary!.changed.map((c) => c.serial).sort()).toEqual(NOW_FAILING);
    for (const c of run.summary!.changed) {
      expect(c).toMatchObject({
        before: { verdict: 'pass' },
        after: { verdict: 'fail' },
        checks: ['offset.within_limits'],
      });
    }
    const { draft: d, inForce } = run.summary!.histogram;
    expect(d.counts.reduce((a, b) => a + b, 0)).toBe(OFFSETS.length);
    expect(inForce.counts.reduce((a, b) => a + b, 0)).toBe(OFFSETS.length);
    expect(d.fromDeg).toBeLessThanOrEqual(-13);
  });

  it('groups the changed units by hall-board, magnet-ring and stator lot, with the units replayed of each lot', async () => {
    // Three of the four units that would now fail share a hall-board lot; one unit has no magnet lot.
    const hall: Record<string, string> = { 'WI-00': 'HB-2446-C', 'WI-01': 'HB-2446-C', 'WI-06': 'HB-2446-C' };
    for (const [i] of OFFSETS.entries()) {
      const serial = `WI-${String(i).padStart(2, '0')}`;
      await t.database.pool.query(
        'update units set hall_board_lot = $2, magnet_ring_lot = $3, stator_lot = null where serial = $1',
        [serial, hall[serial] ?? 'HB-2446-A', serial === 'WI-07' ? null : 'MR-7'],
      );
    }
    const run = await whatIf(draft.id);
    expect(run.summary!.lots).toEqual({
      hallBoard: [
        { lot: 'HB-2446-C', replayed: 3, changed: 3, passToFail: 3, failToPass: 0 },
        { lot: 'HB-2446-A', replayed: 6, changed: 1, passToFail: 1, failToPass: 0 },
      ],
      magnetRing: [
        { lot: 'MR-7', replayed: 8, changed: 3, passToFail: 3, failToPass: 0 },
        { lot: null, replayed: 1, changed: 1, passToFail: 1, failToPass: 0 },
      ],
      stator: [{ lot: null, replayed: OFFSETS.length, changed: 4, passToFail: 4, failToPass: 0 }],
    });
    const listed = Object.fromEntries(run.summary!.changed.map((c) => [c.serial, c.lots]));
    expect(listed['WI-00']).toEqual({ hallBoard: 'HB-2446-C', magnetRing: 'MR-7', stator: null });
    expect(listed['WI-07']).toEqual({ hallBoard: 'HB-2446-A', magnetRing: null, stator: null });
  });

  it('leaves no trace on units, measurements, calibrations, travelers, programming or recipes', async () => {
    const before = await fingerprint();
    const run = await whatIf(draft.id);
    expect(run.status).toBe('done');
    expect(await fingerprint()).toEqual(before);
  });

  it('gives for each unit what a recomputation of the same measurement with the same version gives', async () => {
    const run = await whatIf(draft.id, { lastUnits: 1000 });
    // Release the draft, then recompute every replayed measurement with it through the recompute API.
    const submitted = await request(t.app)
      .post(`/api/recipes/${draft.id}/submit`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', evan)
      .send({ reason: 'Narrow the window', revision: draft.revision });
    expect(submitted.status).toBe(200);
    expect(
      (
        await request(t.app)
          .post(`/api/recipes/${draft.id}/approve`)
          .set('Origin', TEST_ORIGIN)
          .set('Cookie', rosa)
          .send({})
      ).status,
    ).toBe(200);
    const { rows: ms } = await t.database.pool.query<{ measurement_id: string; serial: string }>(
      `select m.measurement_id, m.serial from measurements m join units u on u.id = m.unit_id where u.model_id = $1`,
      [line.model.id],
    );
    const byMeasurement = new Map(run.summary!.changed.map((c) => [c.measurementId, c]));
    for (const m of ms) {
      const asked = await request(t.app)
        .post(`/api/measurements/${m.measurement_id}/recompute`)
        .set('Origin', TEST_ORIGIN)
        .set('Cookie', evan)
        .send({ recipeId: draft.id, reason: 'compare with the what-if' });
      expect(asked.status).toBe(202);
      const { rows: jobs } = await t.database.pool.query(
        `select data from pgboss.job where name = 'calibration-compute' and data->>'recipeId' = $1
           and data->>'measurementPk' = (select id::text from measurements where measurement_id = $2)`,
        [draft.id, m.measurement_id],
      );
      await computeCalibration(ctx(), jobs[0].data);
      const { rows: cal } = await t.database.pool.query(
        `select c.verdict, c.offset_deg from calibrations c join measurements m on m.id = c.measurement_pk
          where m.measurement_id = $1 and c.recipe_id = $2 and c.purpose = 'recompute'`,
        [m.measurement_id, draft.id],
      );
      const listed = byMeasurement.get(m.measurement_id);
      if (listed) expect({ verdict: cal[0].verdict, offsetDeg: cal[0].offset_deg }).toEqual(listed.after);
      else expect(cal[0].verdict).toBe(m.serial === 'WI-08' ? 'fail' : 'pass');
    }
    // The draft's offset distribution is the recomputed offsets, bin by bin.
    const { rows: offsets } = await t.database.pool.query<{ offset_deg: number }>(
      `select offset_deg from calibrations where recipe_id = $1 and purpose = 'recompute'`,
      [draft.id],
    );
    const h = run.summary!.histogram.draft;
    const counts = new Array(h.counts.length).fill(0);
    for (const { offset_deg } of offsets) counts[Math.floor(offset_deg) - h.fromDeg]++;
    expect(counts).toEqual(h.counts);
  });

  it('a cancelled run stops before replaying and says so', async () => {
    const other = await createLineFixture(t.deps.db, { code: 'WI-2', stationName: 'EOL-WI-2' });
    const started = await request(t.app)
      .post(`/api/recipes/${other.recipe.id}/what-if`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', evan)
      .send({});
    const cancelled = await request(t.app)
      .post(`/api/what-if/${started.body.id}/cancel`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', evan)
      .send({});
    expect(cancelled.status).toBe(200);
    const run = await runWhatIf(ctx(), started.body.id);
    expect(run).toMatchObject({ status: 'cancelled', processed: 0 });
    const again = await request(t.app)
      .post(`/api/what-if/${started.body.id}/cancel`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', evan)
      .send({});
    expect(again.status).toBe(409);
  });

  it('operators and quality read runs but cannot start or cancel one', async () => {
    const olga = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
    const quinn = await sessionCookie(t.app, 'quinn.quality', 'demo-quality-pass');
    for (const who of [olga, quinn]) {
      expect(
        (
          await request(t.app)
            .post(`/api/recipes/${draft.id}/what-if`)
            .set('Origin', TEST_ORIGIN)
            .set('Cookie', who)
            .send({})
        ).status,
      ).toBe(403);
      expect(
        (
          await request(t.app)
            .get(`/api/recipes/${draft.id}/what-if`)
            .set('Origin', TEST_ORIGIN)
            .set('Cookie', who)
        ).status,
      ).toBe(200);
    }
  });

  it('refuses a time range that ends before it starts, in plain words', async () => {
    const res = await request(t.app)
      .post(`/api/recipes/${draft.id}/what-if`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', evan)
      .send({ filters: { from: '2026-11-30T00:00:00Z', to: '2026-11-01T00:00:00Z' } });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0]).toMatchObject({
      message: 'The start of the time range must not be after its end.',
    });
  });
});
