import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { computeCalibration, type MeasurementsContext } from '../measurements/measurements.service';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let ctx: MeasurementsContext;
let quality = '';
let engineer = '';
let operator = '';
let admin = '';
const people: Record<string, string> = {};

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-45', stationName: 'EOL-SEARCH' });
  ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
  quality = await sessionCookie(t.app, 'quinn.quality', 'demo-quality-pass');
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  operator = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
  admin = await sessionCookie(t.app, 'ada.admin', 'demo-admin-pass');
  const { rows } = await t.database.pool.query<{ username: string; id: string }>(
    'select username, id from users',
  );
  for (const r of rows) people[r.username] = r.id;
});
afterAll(async () => {
  await t?.close();
});

const as = (cookie: string) => ({
  get: (url: string) => request(t.app).get(url).set('Cookie', cookie),
  post: (url: string, body: object) =>
    request(t.app).post(url).set('Origin', TEST_ORIGIN).set('Cookie', cookie).send(body),
  delete: (url: string) => request(t.app).delete(url).set('Origin', TEST_ORIGIN).set('Cookie', cookie),
});

async function addUnit(serial: string, lots: { hb?: string; mr?: string; st?: string }, createdAt: string) {
  await t.database.pool.query(
    `insert into units (serial, model_id, hall_board_lot, magnet_ring_lot, stator_lot, created_at)
     values ($1, $2, $3, $4, $5, $6)`,
    [serial, line.model.id, lots.hb ?? null, lots.mr ?? null, lots.st ?? null, createdAt],
  );
}

/** Measures a unit at the fixture's station with `who` signed in at its panel, at `at`. */
async function measureBy(serial: string, who: string, at: string) {
  await t.database.pool.query('update stations set attended_by = $1 where id = $2', [
    people[who],
    line.station.id,
  ]);
  t.setNow(new Date(at));
  const m = simulatedMeasurement(line.recipe.body, serial, { offsetDeg: 3 });
  const res = await request(t.app).post('/api/station/measurements').set('X-Station-Key', line.key).send(m);
  expect(res.status).toBe(202);
  const { rows } = await t.database.pool.query('select id from measurements where measurement_id = $1', [
    m.measurementId,
  ]);
  await computeCalibration(ctx, { measurementPk: rows[0].id, recipeId: line.recipe.id });
  t.setNow(new Date());
}

const search = async (query: Record<string, string>) => {
  const res = await as(quality).get(
    `/api/quality/units?${new URLSearchParams({ pageSize: '200', ...query })}`,
  );
  expect(res.status).toBe(200);
  return (res.body.rows as { serial: string }[]).map((r) => r.serial).sort();
};

describe('containment search: the filters added to the form', () => {
  beforeAll(async () => {
    await addUnit('OP-0001', { hb: 'HB-OP1', mr: 'MR-OP1', st: 'ST-OP1' }, '2026-05-01T06:00:00Z');
    await addUnit('OP-0002', { hb: 'HB-OP1', mr: 'MR-OP2', st: 'ST-OP2' }, '2026-05-02T06:00:00Z');
    await addUnit('OP-0003', { hb: 'HB-OP2', mr: 'MR-OP1', st: 'ST-OP2' }, '2026-05-03T06:00:00Z');
    await addUnit('OP-0004', { hb: 'HB-OP2', mr: 'MR-OP2', st: 'ST-OP1' }, '2026-05-04T06:00:00Z');
    await measureBy('OP-0001', 'olga.operator', '2026-05-10T08:00:00Z');
    await measureBy('OP-0002', 'evan.engineer', '2026-05-11T08:00:00Z');
    await measureBy('OP-0003', 'olga.operator', '2026-05-12T08:00:00Z');
  });

  it('finds units by the operator at the panel alone', async () => {
    expect(await search({ operatorId: people['olga.operator'] })).toEqual(['OP-0001', 'OP-0003']);
    expect(await search({ operatorId: people['evan.engineer'] })).toEqual(['OP-0002']);
    expect(await search({ operatorId: people['quinn.quality'] })).toEqual([]);
  });

  it('finds units by each lot kind, the serial range and the build time alone', async () => {
    expect(await search({ hallBoardLot: 'HB-OP1' })).toEqual(['OP-0001', 'OP-0002']);
    expect(await search({ magnetRingLot: 'MR-OP1' })).toEqual(['OP-0001', 'OP-0003']);
    expect(await search({ statorLot: 'ST-OP1' })).toEqual(['OP-0001', 'OP-0004']);
    expect(await search({ serialFrom: 'OP-0002', serialTo: 'OP-0004' })).toEqual([
      'OP-0002',
      'OP-0003',
      'OP-0004',
    ]);
    expect(await search({ builtFrom: '2026-05-03T00:00:00Z', builtTo: '2026-05-31T00:00:00Z' })).toEqual([
      'OP-0003',
      'OP-0004',
    ]);
    expect(await search({ recipeId: line.recipe.id, status: 'new', serialPrefix: 'OP' })).toEqual([]);
    expect(await search({ status: 'new', serialPrefix: 'OP' })).toEqual(['OP-0004']);
  });

  it('combines them: operator + lot + serial range + build and measurement times + recipe', async () => {
    expect(
      await search({
        operatorId: people['olga.operator'],
        magnetRingLot: 'MR-OP1',
        serialFrom: 'OP-0001',
        serialTo: 'OP-0003',
        builtFrom: '2026-05-02T00:00:00Z',
        measuredFrom: '2026-05-12T00:00:00Z',
        measuredTo: '2026-05-12T23:59:59Z',
        recipeId: line.recipe.id,
        stationId: line.station.id,
      }),
    ).toEqual(['OP-0003']);
    // The station-result conditions must hold for one result: olga measured OP-0001 on the 10th only.
    expect(
      await search({
        operatorId: people['olga.operator'],
        measuredFrom: '2026-05-11T00:00:00Z',
        measuredTo: '2026-05-11T23:59:59Z',
      }),
    ).toEqual([]);
  });

  it('gives the form its lists: people at the panel, released recipe versions, engine versions', async () => {
    const res = await as(quality).get('/api/quality/search-choices');
    expect(res.status).toBe(200);
    expect(res.body.operators).toContainEqual({ id: people['olga.operator'], name: 'Olga Varnavas' });
    expect(res.body.recipes).toContainEqual(
      expect.objectContaining({ id: line.recipe.id, modelCode: 'TM-45', status: 'released' }),
    );
    expect(res.body.engineVersions.length).toBeGreaterThan(0);
    expect((await as(operator).get('/api/quality/search-choices')).status).toBe(403);
  });

  it('streams a result longer than one batch as CSV, in order, every unit once', async () => {
    await t.database.pool.query(
      `insert into units (serial, model_id, stator_lot)
       select 'CSV-' || lpad(i::text, 5, '0'), $1, 'ST-CSV' from generate_series(1, 4321) i`,
      [line.model.id],
    );
    const res = await as(quality).get('/api/quality/units.csv?statorLot=ST-CSV&sort=serial&dir=desc');
    expect(res.status).toBe(200);
    const lines = res.text.trim().split('\r\n');
    expect(lines).toHaveLength(4322);
    const serials = lines.slice(1).map((l) => l.split(',')[0]);
    expect(new Set(serials).size).toBe(4321);
    expect(serials[0]).toBe('CSV-04321');
    expect(serials.at(-1)).toBe('CSV-00001');
    expect(lines[1].split(',')).toEqual([
      'CSV-04321',
      'TM-45',
      '',
      '',
      '',
      'ST-CSV',
      'new',
      '',
      '0',
      '',
      'false',
      expect.stringMatching(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/),
      expect.stringMatching(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/),
    ]);
  });
});

describe('saved searches', () => {
  const filter = { hallBoardLot: 'HB-OP1', measuredFrom: '2026-05-10T00:00:00Z' };

  it('quality saves a filter under a name; engineers list and open it; operators may not', async () => {
    const saved = await as(quality).post('/api/quality/saved-searches', {
      name: 'Lot HB-OP1 after the 10th',
      filter: { ...filter, statorLot: '', notAFilter: 'x' },
    });
    expect(saved.status).toBe(201);
    expect(saved.body).toMatchObject({
      name: 'Lot HB-OP1 after the 10th',
      filter,
      savedBy: 'Quinn Abernethy',
      mine: true,
    });
    const list = await as(engineer).get('/api/quality/saved-searches');
    expect(list.status).toBe(200);
    const mine = list.body.savedSearches.find((s: { id: string }) => s.id === saved.body.id);
    expect(mine).toMatchObject({ filter, mine: false });
    // Opening it is searching with its filter.
    expect(await search(mine.filter)).toEqual(['OP-0001', 'OP-0002']);
    expect((await as(operator).get('/api/quality/saved-searches')).status).toBe(403);
    expect((await as(operator).post('/api/quality/saved-searches', { name: 'Mine', filter })).status).toBe(
      403,
    );
    const { rows } = await t.database.pool.query(
      `select action, actor_name from audit_log where subject_type = 'saved_search' and subject_id = $1`,
      [saved.body.id],
    );
    expect(rows).toEqual([{ action: 'quality.search_saved', actor_name: 'Quinn Abernethy' }]);
  });

  it('refuses a taken name, an empty filter and a filter the search would refuse', async () => {
    await as(quality).post('/api/quality/saved-searches', { name: 'Taken name', filter });
    const taken = await as(engineer).post('/api/quality/saved-searches', { name: 'TAKEN NAME', filter });
    expect(taken.status).toBe(409);
    expect(taken.body.error.code).toBe('quality.saved_search_name_taken');
    const empty = await as(quality).post('/api/quality/saved-searches', {
      name: 'Everything',
      filter: { lot: '' },
    });
    expect(empty.status).toBe(422);
    expect(empty.body.error.code).toBe('quality.saved_search_empty');
    const bad = await as(quality).post('/api/quality/saved-searches', {
      name: 'Bad',
      filter: { stationId: 'EOL-3' },
    });
    expect(bad.status).toBe(400);
    expect(bad.body.error.issues.map((i: { path: string }) => i.path)).toEqual(['stationId']);
  });

  it('only the person who saved it, or an administrator, deletes it (audited)', async () => {
    const a = (await as(engineer).post('/api/quality/saved-searches', { name: 'Evan lot', filter })).body;
    const b = (await as(engineer).post('/api/quality/saved-searches', { name: 'Evan lot 2', filter })).body;
    const refused = await as(quality).delete(`/api/quality/saved-searches/${a.id}`);
    expect(refused.status).toBe(403);
    expect(refused.body.error.code).toBe('quality.saved_search_not_yours');
    expect((await as(operator).delete(`/api/quality/saved-searches/${a.id}`)).status).toBe(403);
    expect((await as(engineer).delete(`/api/quality/saved-searches/${a.id}`)).status).toBe(204);
    expect((await as(admin).delete(`/api/quality/saved-searches/${b.id}`)).status).toBe(204);
    expect((await as(engineer).delete(`/api/quality/saved-searches/${a.id}`)).status).toBe(404);
    const names = (await as(quality).get('/api/quality/saved-searches')).body.savedSearches.map(
      (s: { name: string }) => s.name,
    );
    expect(names).not.toContain('Evan lot');
    expect(names).not.toContain('Evan lot 2');
    const { rows } = await t.database.pool.query(
      `select subject_id, actor_name from audit_log where action = 'quality.search_deleted' order by id`,
    );
    expect(rows).toEqual([
      { subject_id: a.id, actor_name: 'Evan Thorsby' },
      { subject_id: b.id, actor_name: 'Ada Okonkwo-Reyes' },
    ]);
  });
});

describe('bulk hold of a search result, set-based', () => {
  it('holds every unit of a search once, audited once each, and a repeat holds nothing twice', async () => {
    await t.database.pool.query(
      `insert into units (serial, model_id, magnet_ring_lot)
       select 'SB-' || lpad(i::text, 4, '0'), $1, 'MR-SB' from generate_series(1, 1500) i`,
      [line.model.id],
    );
    await t.database.pool.query(`update units set status = 'scrapped' where serial = 'SB-0007'`);
    const body = { search: { magnetRingLot: 'MR-SB' }, reason: 'Magnet ring lot MR-SB suspect' };
    const first = await as(quality).post('/api/quality/holds', body);
    expect(first.status).toBe(200);
    expect(first.body).toMatchObject({ held: 1499, alreadyHeld: 0, scrapped: 1 });
    const again = await as(quality).post('/api/quality/holds', body);
    expect(again.body).toMatchObject({ held: 0, alreadyHeld: 1499, scrapped: 1 });
    const { rows } = await t.database.pool.query(
      `select count(*) filter (where u.status = 'on_hold')::int as on_hold,
              (select count(*)::int from unit_holds h join units x on x.id = h.unit_id where x.magnet_ring_lot = 'MR-SB') as holds,
              (select count(*)::int from audit_log a where a.action = 'units.held' and a.reason = 'Magnet ring lot MR-SB suspect') as audits,
              (select count(distinct a.subject_id)::int from audit_log a where a.action = 'units.held' and a.reason = 'Magnet ring lot MR-SB suspect') as audited_units
         from units u where u.magnet_ring_lot = 'MR-SB'`,
    );
    expect(rows[0]).toEqual({ on_hold: 1499, holds: 1499, audits: 1499, audited_units: 1499 });
    const audit = await t.database.pool.query(
      `select before, after, actor_name from audit_log where action = 'units.held' and reason = 'Magnet ring lot MR-SB suspect' limit 1`,
    );
    expect(audit.rows[0]).toMatchObject({
      before: { status: 'new', holdReason: null, attempts: 0 },
      after: { status: 'on_hold', holdReason: 'Magnet ring lot MR-SB suspect', investigation: null },
      actor_name: 'Quinn Abernethy',
    });
  });
});
