import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { createHash } from 'node:crypto';
import { computeCalibration, type MeasurementsContext } from '../measurements/measurements.service';
import { canonicalMeasurementText } from '#shared/capture/as-posted';
import { simulateCapture } from '#shared/simulation/capture-sim';
import { createRng } from '#shared/simulation/rng';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let other: Awaited<ReturnType<typeof createLineFixture>>;
let ctx: MeasurementsContext;
let quality = '';
let engineer = '';
let operator = '';

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-40' });
  other = await createLineFixture(t.deps.db, { code: 'TM-60', polePairs: 6, stationName: 'EOL-OTHER' });
  ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
  quality = await sessionCookie(t.app, 'quinn.quality', 'demo-quality-pass');
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  operator = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
});
afterAll(async () => {
  await t?.close();
});

const as = (cookie: string) => ({
  get: (url: string) => request(t.app).get(url).set('Cookie', cookie),
  post: (url: string, body: object) =>
    request(t.app).post(url).set('Origin', TEST_ORIGIN).set('Cookie', cookie).send(body),
  patch: (url: string, body: object) =>
    request(t.app).patch(url).set('Origin', TEST_ORIGIN).set('Cookie', cookie).send(body),
});

async function addUnits(
  rows: { serial: string; modelId?: string; hb?: string; mr?: string; st?: string; createdAt?: string }[],
) {
  for (const r of rows) {
    await t.database.pool.query(
      `insert into units (serial, model_id, hall_board_lot, magnet_ring_lot, stator_lot, created_at)
       values ($1, $2, $3, $4, $5, coalesce($6::timestamptz, now()))`,
      [r.serial, r.modelId ?? line.model.id, r.hb ?? null, r.mr ?? null, r.st ?? null, r.createdAt ?? null],
    );
  }
}

/** Posts a simulated measurement and computes it the way the worker would, at `at`. */
async function measure(serial: string, opts: { offsetDeg?: number; at?: string; key?: string } = {}) {
  const fixture = opts.key === other.key ? other : line;
  const m = simulatedMeasurement(fixture.recipe.body, serial, { offsetDeg: opts.offsetDeg ?? 3 });
  if (opts.at) t.setNow(new Date(opts.at));
  const res = await request(t.app)
    .post('/api/station/measurements')
    .set('X-Station-Key', fixture.key)
    .send(m);
  if (res.status !== 202) {
    t.setNow(new Date());
    return { res, measurementId: m.measurementId };
  }
  await computeCalibration(ctx, { measurementPk: await pkOf(m.measurementId), recipeId: fixture.recipe.id });
  t.setNow(new Date());
  return { res, measurementId: m.measurementId };
}

async function pkOf(measurementId: string): Promise<string> {
  const { rows } = await t.database.pool.query('select id from measurements where measurement_id = $1', [
    measurementId,
  ]);
  return rows[0].id;
}

async function unitRow(serial: string) {
  const { rows } = await t.database.pool.query(
    'select status, hold_reason, attempts from units where serial = $1',
    [serial],
  );
  return rows[0] as { status: string; hold_reason: string | null; attempts: number };
}

const search = async (query: Record<string, string>) => {
  const res = await as(quality).get(
    `/api/quality/units?${new URLSearchParams({ pageSize: '200', ...query })}`,
  );
  expect(res.status).toBe(200);
  return res.body as { rows: { serial: string }[]; total: number };
};
const serialsOf = (body: { rows: { serial: string }[] }) => body.rows.map((r) => r.serial).sort();

describe('containment search', () => {
  beforeAll(async () => {
    await addUnits([
      { serial: 'CS-0001', hb: 'HB-S1', mr: 'MR-S1', st: 'ST-S1', createdAt: '2026-03-01T08:00:00Z' },
      { serial: 'CS-0002', hb: 'HB-S1', mr: 'MR-S2', st: 'ST-S1', createdAt: '2026-03-02T08:00:00Z' },
      { serial: 'CS-0003', hb: 'HB-S2', mr: 'MR-S1', st: 'ST-S2', createdAt: '2026-03-03T08:00:00Z' },
      { serial: 'CS-0004', hb: 'HB-S2', mr: 'MR-S2', st: 'ST-S2', createdAt: '2026-03-04T08:00:00Z' },
      { serial: 'CT-0005', modelId: other.model.id, hb: 'HB-S1', createdAt: '2026-03-05T08:00:00Z' },
    ]);
    await measure('CS-0001', { offsetDeg: 2, at: '2026-03-10T10:00:00Z' });
    await measure('CS-0002', { offsetDeg: 9, at: '2026-03-11T10:00:00Z' });
    await measure('CS-0003', { offsetDeg: 40, at: '2026-03-12T10:00:00Z' });
    await measure('CT-0005', { offsetDeg: 2, at: '2026-03-12T11:00:00Z', key: other.key });
  });

  it('finds units by each filter alone', async () => {
    expect(serialsOf(await search({ lot: 'HB-S1' }))).toEqual(['CS-0001', 'CS-0002', 'CT-0005']);
    expect(serialsOf(await search({ hallBoardLot: 'HB-S2' }))).toEqual(['CS-0003', 'CS-0004']);
    expect(serialsOf(await search({ magnetRingLot: 'MR-S2' }))).toEqual(['CS-0002', 'CS-0004']);
    expect(serialsOf(await search({ statorLot: 'ST-S1' }))).toEqual(['CS-0001', 'CS-0002']);
    expect(serialsOf(await search({ modelId: other.model.id }))).toEqual(['CT-0005']);
    expect(serialsOf(await search({ serialPrefix: 'ct-' }))).toEqual(['CT-0005']);
    expect(serialsOf(await search({ serialFrom: 'CS-0002', serialTo: 'CS-0003' }))).toEqual([
      'CS-0002',
      'CS-0003',
    ]);
    expect(
      serialsOf(await search({ builtFrom: '2026-03-02T00:00:00Z', builtTo: '2026-03-03T23:59:59Z' })),
    ).toEqual(['CS-0002', 'CS-0003']);
    expect(serialsOf(await search({ stationId: other.station.id }))).toEqual(['CT-0005']);
    expect(
      serialsOf(await search({ measuredFrom: '2026-03-11T00:00:00Z', measuredTo: '2026-03-11T23:59:59Z' })),
    ).toEqual(['CS-0002']);
    expect(serialsOf(await search({ verdict: 'fail' }))).toEqual(['CS-0003']);
    expect(serialsOf(await search({ status: 'new', serialPrefix: 'CS' }))).toEqual(['CS-0004']);
    expect(serialsOf(await search({ offsetMinDeg: '5', offsetMaxDeg: '15' }))).toEqual(['CS-0002']);
    expect(serialsOf(await search({ recipeId: other.recipe.id }))).toEqual(['CT-0005']);
    expect(serialsOf(await search({ failedCheck: 'offset.within_limits', serialPrefix: 'CS' }))).toEqual([
      'CS-0003',
    ]);
    const engine = (await t.database.pool.query(`select engine_version from calibrations limit 1`)).rows[0]
      .engine_version as string;
    expect((await search({ engineVersion: engine, serialPrefix: 'C' })).total).toBe(4);
    expect((await search({ engineVersion: 'no-such-engine' })).total).toBe(0);
    expect((await search({ programmingMismatch: 'true', serialPrefix: 'C' })).total).toBe(0);
  });

  it('combines filters: lot + measurement time + station', async () => {
    const both = await search({
      lot: 'HB-S1',
      stationId: line.station.id,
      measuredFrom: '2026-03-10T00:00:00Z',
      measuredTo: '2026-03-10T23:59:59Z',
    });
    expect(serialsOf(both)).toEqual(['CS-0001']);
    expect(serialsOf(await search({ lot: 'HB-S2', verdict: 'pass' }))).toEqual([]);
  });

  it('pages and sorts on the server and gives the total', async () => {
    const page1 = await search({ serialPrefix: 'C', sort: 'serial', dir: 'desc', pageSize: '2', page: '1' });
    expect(page1.total).toBe(5);
    expect(page1.rows.map((r) => r.serial)).toEqual(['CT-0005', 'CS-0004']);
    const page3 = await search({ serialPrefix: 'C', sort: 'serial', dir: 'desc', pageSize: '2', page: '3' });
    expect(page3.rows.map((r) => r.serial)).toEqual(['CS-0001']);
    const beyond = await search({ serialPrefix: 'C', pageSize: '2', page: '9' });
    expect(beyond).toMatchObject({ rows: [], total: 5 });
  });

  it('refuses a bad filter in plain words', async () => {
    const res = await as(quality).get('/api/quality/units?stationId=EOL-3&offsetMinDeg=abc');
    expect(res.status).toBe(400);
    expect(res.body.error.issues.map((i: { path: string }) => i.path).sort()).toEqual([
      'offsetMinDeg',
      'stationId',
    ]);
  });

  it('exports the whole result as CSV', async () => {
    const res = await as(quality).get('/api/quality/units.csv?lot=HB-S1&sort=serial');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/text\/csv/);
    const lines = res.text.trim().split('\r\n');
    expect(lines[0]).toMatch(/^serial,model,/);
    expect(lines.slice(1).map((l) => l.split(',')[0])).toEqual(['CS-0001', 'CS-0002', 'CT-0005']);
  });

  it('is for quality and engineers, not operators', async () => {
    expect((await as(operator).get('/api/quality/units?lot=HB-S1')).status).toBe(403);
    expect((await as(engineer).get('/api/quality/units?lot=HB-S1')).status).toBe(200);
  });
});

describe('bulk hold', () => {
  it('holds a selection once, audited per unit, and repeating it changes nothing', async () => {
    await addUnits([{ serial: 'BH-0001' }, { serial: 'BH-0002' }, { serial: 'BH-0003' }]);
    const body = { serials: ['bh-0001', 'BH-0002', 'BH-0003'], reason: 'Suspect magnet lot' };
    const first = await as(quality).post('/api/quality/holds', body);
    expect(first.status).toBe(200);
    expect(first.body).toMatchObject({ held: 3, alreadyHeld: 0, scrapped: 0, investigation: null });
    const again = await as(quality).post('/api/quality/holds', body);
    expect(again.body).toMatchObject({ held: 0, alreadyHeld: 3 });
    const { rows } = await t.database.pool.query(
      `select u.serial, count(h.id)::int as holds,
              (select count(*)::int from audit_log a where a.subject_id = u.id::text and a.action = 'units.held') as audits
         from units u left join unit_holds h on h.unit_id = u.id
        where u.serial like 'BH-%' group by u.id order by u.serial`,
    );
    expect(rows).toEqual([
      { serial: 'BH-0001', holds: 1, audits: 1 },
      { serial: 'BH-0002', holds: 1, audits: 1 },
      { serial: 'BH-0003', holds: 1, audits: 1 },
    ]);
    expect((await unitRow('BH-0002')).status).toBe('on_hold');
  });

  it('holds a whole search result under a new investigation and mails the quality group', async () => {
    await addUnits([
      { serial: 'LOT-0001', hb: 'HB-LOT9' },
      { serial: 'LOT-0002', hb: 'HB-LOT9' },
      { serial: 'LOT-0003', hb: 'HB-OTHER' },
    ]);
    const res = await as(quality).post('/api/quality/holds', {
      search: { hallBoardLot: 'HB-LOT9' },
      reason: 'Return RMA-88: hall board lot suspected',
      newInvestigation: { title: 'Motor stalls at start', customerRef: 'RMA-88' },
    });
    expect(res.status).toBe(200);
    expect(res.body.held).toBe(2);
    expect(res.body.investigation.reference).toMatch(/^INV-\d{4}$/);
    expect((await unitRow('LOT-0003')).status).toBe('new');
    const inv = await as(quality).get(`/api/quality/investigations/${res.body.investigation.id}`);
    expect(inv.body.units.map((u: { serial: string }) => u.serial).sort()).toEqual(['LOT-0001', 'LOT-0002']);
    const held = await as(quality).get('/api/quality/holds');
    const row = held.body.holds.find((h: { serial: string }) => h.serial === 'LOT-0001');
    expect(row).toMatchObject({
      reason: 'Return RMA-88: hall board lot suspected',
      heldBy: 'Quinn Abernethy',
      source: 'person',
      investigation: { reference: res.body.investigation.reference, title: 'Motor stalls at start' },
    });
    expect(row.ageHours).toBe(0);
    await expect
      .poll(
        () => t.mail.messages().filter((m) => m.subject.includes(res.body.investigation.reference)).length,
      )
      .toBe(1);
    const mail = t.mail.messages().find((m) => m.subject.includes(res.body.investigation.reference))!;
    expect(mail.to).toEqual(['quinn.quality@corvane.example']);
    expect(mail.subject).toMatch(/opened: Motor stalls at start/);
  });

  it('holds none when a failure strikes half-way through', async () => {
    await addUnits([{ serial: 'AT-0001' }, { serial: 'AT-0002' }, { serial: 'AT-0003' }]);
    const owner = t.database.ownerPool();
    // A fault injected by the owner role: the hold record of the second unit cannot be written.
    await owner.query(`create function fail_second_hold() returns trigger language plpgsql as $$
      begin
        if (select serial from units where id = new.unit_id) = 'AT-0002' then raise exception 'disk full'; end if;
        return new;
      end $$`);
    await owner.query(
      `create trigger fail_second_hold before insert on unit_holds for each row execute function fail_second_hold()`,
    );
    try {
      const res = await as(quality).post('/api/quality/holds', {
        serials: ['AT-0001', 'AT-0002', 'AT-0003'],
        reason: 'Atomicity check',
      });
      expect(res.status).toBe(500);
    } finally {
      await owner.query('drop trigger fail_second_hold on unit_holds');
      await owner.query('drop function fail_second_hold()');
    }
    const { rows } = await t.database.pool.query(
      `select count(*) filter (where status = 'on_hold')::int as held,
              (select count(*)::int from audit_log where reason = 'Atomicity check') as audits
         from units where serial like 'AT-%'`,
    );
    expect(rows[0]).toEqual({ held: 0, audits: 0 });
  });

  it('refuses unknown serials by name and holds nothing', async () => {
    await addUnits([{ serial: 'UK-0001' }]);
    const res = await as(quality).post('/api/quality/holds', {
      serials: ['UK-0001', 'UK-NOPE'],
      reason: 'Check',
    });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/UK-NOPE/);
    expect((await unitRow('UK-0001')).status).toBe('new');
  });

  it('a held unit is refused by the station with 409 until released', async () => {
    await addUnits([{ serial: 'ST-HELD-1' }]);
    await as(quality).post('/api/quality/holds', { serials: ['ST-HELD-1'], reason: 'Customer return' });
    const refused = await measure('ST-HELD-1');
    expect(refused.res.status).toBe(409);
    expect(refused.res.body.error.code).toBe('units.on_hold');
    expect(refused.res.body.error.message).toMatch(/Customer return/);
    await as(quality).post('/api/quality/releases', {
      serials: ['ST-HELD-1'],
      disposition: 'recalibrate',
      reason: 'Checked',
    });
    expect((await measure('ST-HELD-1')).res.status).toBe(202);
  });

  it('operators may not hold or release', async () => {
    await addUnits([{ serial: 'OP-0001' }]);
    expect(
      (await as(operator).post('/api/quality/holds', { serials: ['OP-0001'], reason: 'x y z' })).status,
    ).toBe(403);
    await as(quality).post('/api/quality/holds', { serials: ['OP-0001'], reason: 'Held' });
    const release = { serials: ['OP-0001'], disposition: 'use_as_is', reason: 'fine' };
    expect((await as(operator).post('/api/quality/releases', release)).status).toBe(403);
    expect((await as(operator).post('/api/units/OP-0001/hold', { hold: false, ...release })).status).toBe(
      403,
    );
    expect((await unitRow('OP-0001')).status).toBe('on_hold');
  });
});

describe('release with a disposition', () => {
  it('recalibrate restarts the attempt count under the recipe budget', async () => {
    // Three failing attempts exhaust the fixture recipe's budget of 3: the retest policy holds the unit.
    await addUnits([{ serial: 'RC-0001' }]);
    for (let i = 0; i < 3; i++) await measure('RC-0001', { offsetDeg: 22 });
    const before = await unitRow('RC-0001');
    expect(before).toMatchObject({ status: 'on_hold', attempts: 3 });
    const held = await as(quality).get('/api/quality/holds');
    expect(held.body.holds.find((h: { serial: string }) => h.serial === 'RC-0001')).toMatchObject({
      source: 'retest_policy',
      heldBy: 'Retest policy (automatic)',
    });
    const res = await as(engineer).post('/api/quality/releases', {
      serials: ['RC-0001'],
      disposition: 'recalibrate',
      reason: 'Fixture coupling replaced',
    });
    expect(res.status).toBe(200);
    expect(res.body.units).toEqual([{ serial: 'RC-0001', status: 'failed', attempts: 0 }]);
    const { rows } = await t.database.pool.query(
      `select disposition, attempt_budget, released_by_name from unit_holds h join units u on u.id = h.unit_id
        where u.serial = 'RC-0001'`,
    );
    expect(rows).toEqual([
      { disposition: 'recalibrate', attempt_budget: 3, released_by_name: 'Evan Thorsby' },
    ]);
    expect((await measure('RC-0001', { offsetDeg: 2 })).res.status).toBe(202);
    expect(await unitRow('RC-0001')).toMatchObject({ status: 'calibrated', attempts: 1 });
  });

  it('use as is needs a passing calibration; rework sends the unit back to be calibrated afresh', async () => {
    await addUnits([{ serial: 'UA-0001' }, { serial: 'UA-0002' }]);
    await measure('UA-0001', { offsetDeg: 2 });
    await as(quality).post('/api/quality/holds', { serials: ['UA-0001', 'UA-0002'], reason: 'Audit sample' });
    const refused = await as(quality).post('/api/quality/releases', {
      serials: ['UA-0001', 'UA-0002'],
      disposition: 'use_as_is',
      reason: 'Fine',
    });
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(/UA-0002/);
    expect((await unitRow('UA-0001')).status).toBe('on_hold');
    const ok = await as(quality).post('/api/quality/releases', {
      serials: ['UA-0001'],
      disposition: 'use_as_is',
      reason: 'Fine',
    });
    expect(ok.body.units).toEqual([{ serial: 'UA-0001', status: 'calibrated', attempts: 1 }]);
    const rework = await as(quality).post('/api/quality/releases', {
      serials: ['UA-0002'],
      disposition: 'rework',
      reason: 'Hall board replaced',
    });
    expect(rework.body.units).toEqual([{ serial: 'UA-0002', status: 'new', attempts: 0 }]);
  });

  it('scrap is final: no release, no hold, no measurement afterwards', async () => {
    await addUnits([{ serial: 'SC-0001' }]);
    await as(quality).post('/api/quality/holds', { serials: ['SC-0001'], reason: 'Cracked housing' });
    const scrap = await as(quality).post('/api/quality/releases', {
      serials: ['SC-0001'],
      disposition: 'scrap',
      reason: 'Cracked housing',
    });
    expect(scrap.body.units).toEqual([{ serial: 'SC-0001', status: 'scrapped', attempts: 0 }]);
    const rehold = await as(quality).post('/api/quality/holds', { serials: ['SC-0001'], reason: 'Again' });
    expect(rehold.body).toMatchObject({ held: 0, scrapped: 1 });
    const release = await as(quality).post('/api/quality/releases', {
      serials: ['SC-0001'],
      disposition: 'use_as_is',
      reason: 'Changed my mind',
    });
    expect(release.status).toBe(409);
    expect(release.body.error.code).toBe('quality.scrapped');
    const posted = await measure('SC-0001');
    expect(posted.res.status).toBe(409);
    expect(posted.res.body.error.code).toBe('units.scrapped');
  });

  it('refuses to release a unit that is not on hold, and releases none of the others', async () => {
    await addUnits([{ serial: 'NH-0001' }, { serial: 'NH-0002' }]);
    await as(quality).post('/api/quality/holds', { serials: ['NH-0001'], reason: 'Held' });
    const res = await as(quality).post('/api/quality/releases', {
      serials: ['NH-0001', 'NH-0002'],
      disposition: 'rework',
      reason: 'x y z',
    });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/NH-0002 is not on hold/);
    expect((await unitRow('NH-0001')).status).toBe('on_hold');
  });
});

describe('programming mismatch', () => {
  it('puts the unit on hold automatically with the mismatch as the reason', async () => {
    await addUnits([{ serial: 'PM-0001' }]);
    const { measurementId } = await measure('PM-0001', { offsetDeg: 2 });
    const result = await request(t.app)
      .get(`/api/station/measurements/${measurementId}/result`)
      .set('X-Station-Key', line.key);
    const counts = result.body.calibration.offsetCounts as number;
    const res = await request(t.app)
      .post(`/api/station/measurements/${measurementId}/programming`)
      .set('X-Station-Key', line.key)
      .send({ writtenCounts: counts, readBackCounts: counts + 32 });
    expect(res.body.matches).toBe(false);
    const unit = await unitRow('PM-0001');
    expect(unit.status).toBe('on_hold');
    expect(unit.hold_reason).toBe(
      `Programming read-back mismatch: expected ${counts}, written ${counts}, read back ${counts + 32} counts`,
    );
    const held = await as(quality).get('/api/quality/holds');
    expect(held.body.holds.find((h: { serial: string }) => h.serial === 'PM-0001')).toMatchObject({
      source: 'programming_mismatch',
      heldBy: 'Programming check (automatic)',
    });
    const page = await as(operator).get('/api/units/PM-0001');
    expect(page.body.unit).toMatchObject({ status: 'on_hold', programmingMismatch: true });
    expect((await measure('PM-0001')).res.status).toBe(409);
  });
});

describe('investigations', () => {
  it('moves open → contained → closed, never back, keeps a comment thread and mails on close', async () => {
    const opened = await as(quality).post('/api/quality/investigations', {
      title: 'Noise at 3000 rpm',
      customerRef: 'CR-7',
      receivedOn: '2026-11-30',
    });
    expect(opened.status).toBe(201);
    const id = opened.body.id as string;
    await as(quality).post(`/api/quality/investigations/${id}/comments`, { body: 'Scope capture attached.' });
    const contained = await as(quality).patch(`/api/quality/investigations/${id}`, {
      status: 'contained',
      containmentAction: 'Lot HB-LOT9 held',
    });
    expect(contained.body).toMatchObject({ status: 'contained', containmentAction: 'Lot HB-LOT9 held' });
    const back = await as(quality).patch(`/api/quality/investigations/${id}`, { status: 'open' });
    expect(back.status).toBe(409);
    const closed = await as(quality).patch(`/api/quality/investigations/${id}`, {
      status: 'closed',
      rootCause: 'Magnet ring glued 2 mm off',
    });
    expect(closed.body.status).toBe('closed');
    expect(closed.body.comments).toEqual([
      expect.objectContaining({ author: 'Quinn Abernethy', body: 'Scope capture attached.' }),
    ]);
    expect((await as(quality).patch(`/api/quality/investigations/${id}`, { findings: 'late' })).status).toBe(
      409,
    );
    await expect
      .poll(() =>
        t.mail
          .messages()
          .some((m) => m.subject === `Investigation ${opened.body.reference} closed: Noise at 3000 rpm`),
      )
      .toBe(true);
    const { rows } = await t.database.pool.query(
      `select action from audit_log where subject_type = 'investigation' and subject_id = $1 order by id`,
      [id],
    );
    expect(rows.map((r) => r.action)).toEqual([
      'investigations.opened',
      'investigations.commented',
      'investigations.contained',
      'investigations.closed',
    ]);
  });
});

describe('audit trail for quality', () => {
  it("quality reads a unit's trail by serial with names, not ids, and without addresses", async () => {
    await addUnits([{ serial: 'AU-0001' }]);
    await as(quality).post('/api/quality/holds', { serials: ['AU-0001'], reason: 'Trail check' });
    await as(engineer).post('/api/quality/releases', {
      serials: ['AU-0001'],
      disposition: 'recalibrate',
      reason: 'Trail release',
    });
    const res = await as(quality).get('/api/audit?serial=au-0001');
    expect(res.status).toBe(200);
    expect(
      res.body.entries.map(
        (e: { action: string; actorName: string; subjectLabel: string; reason: string }) => [
          e.action,
          e.actorName,
          e.subjectLabel,
          e.reason,
        ],
      ),
    ).toEqual([
      ['units.released', 'Evan Thorsby', 'AU-0001', 'Trail release'],
      ['units.held', 'Quinn Abernethy', 'AU-0001', 'Trail check'],
    ]);
    expect(res.body.entries.every((e: { ip: string | null }) => e.ip === null)).toBe(true);
  });

  it('filters by person and action; an unknown unit gives an empty trail', async () => {
    const byPerson = await as(quality).get('/api/audit?person=thorsby&action=units');
    expect(byPerson.body.entries.length).toBeGreaterThan(0);
    expect(byPerson.body.entries.every((e: { actorName: string }) => e.actorName === 'Evan Thorsby')).toBe(
      true,
    );
    await as(quality).post('/api/quality/investigations', { title: 'Trail case' });
    const investigations = await as(quality).get('/api/audit?action=investigations.opened');
    expect(investigations.body.entries.length).toBeGreaterThan(0);
    expect((await as(quality).get('/api/audit?serial=NO-SUCH-UNIT')).body.entries).toEqual([]);
  });

  it('keeps accounts and sign-ins to administrators', async () => {
    const signIns = await as(quality).get('/api/audit?action=auth');
    expect(signIns.body.entries).toEqual([]);
    const admin = await sessionCookie(t.app, 'ada.admin', 'demo-admin-pass');
    const full = await as(admin).get('/api/admin/audit?limit=1000');
    expect(full.body.entries.some((e: { action: string }) => e.action.startsWith('auth.'))).toBe(true);
    expect((await as(quality).get('/api/admin/audit')).status).toBe(403);
    expect((await as(admin).get('/api/audit?serial=AU-0001')).status).toBe(200);
    expect((await as(engineer).get('/api/audit')).status).toBe(403);
    expect((await as(operator).get('/api/audit')).status).toBe(403);
  });

  it('exports the filtered trail as CSV', async () => {
    const res = await as(quality).get('/api/audit.csv?serial=AU-0001');
    expect(res.headers['content-type']).toMatch(/text\/csv/);
    const lines = res.text.trim().split('\r\n');
    expect(lines[0]).toBe('at,who,action,subject_type,subject,reason,before,after');
    expect(lines.slice(1).map((l) => l.split(',').slice(1, 3))).toEqual([
      ['Evan Thorsby', 'units.released'],
      ['Quinn Abernethy', 'units.held'],
    ]);
  });
});

describe('raw data behind the numbers', () => {
  const sha256 = (text: string) => createHash('sha256').update(text).digest('hex');

  it('gives posted timings back byte for byte, and their canonical form hashes to the stored SHA-256', async () => {
    await addUnits([{ serial: 'RAW-0001' }]);
    const m = simulatedMeasurement(line.recipe.body, 'RAW-0001', { offsetDeg: 5 });
    // As a station's JSON library might write it: keys in another order, with white space.
    const { segments, ...rest } = m;
    const posted = JSON.stringify({ segments, ...rest }, null, 1);
    const res = await request(t.app)
      .post('/api/station/measurements')
      .set('X-Station-Key', line.key)
      .set('Content-Type', 'application/json')
      .send(posted);
    expect(res.status).toBe(202);
    await computeCalibration(ctx, { measurementPk: await pkOf(m.measurementId), recipeId: line.recipe.id });
    const raw = await as(quality).get(`/api/quality/measurements/${m.measurementId}/as-posted`).buffer(true);
    expect(raw.status).toBe(200);
    expect(raw.headers['content-disposition']).toMatch(/RAW-0001/);
    const text = raw.text || (raw.body as Buffer).toString('utf8');
    expect(text).toBe(posted);
    // The stored hash was computed at intake over the canonical text (sha256 from node:crypto here).
    expect(sha256(canonicalMeasurementText(text, 'timings'))).toBe(raw.headers['x-stored-sha256']);
    expect(sha256(text)).not.toBe(raw.headers['x-stored-sha256']);

    const trace = await as(quality).get(`/api/quality/measurements/${m.measurementId}/trace`);
    expect(trace.body).toMatchObject({ serial: 'RAW-0001', source: 'timings', problem: null });
    expect(trace.body.payloadSha256).toBe(raw.headers['x-stored-sha256']);
    const edges = trace.body.segments[0].edges as { offsetDeg: number | null }[];
    expect(edges.length).toBeGreaterThan(100);
    expect(trace.body.segments[0].crossings.length).toBeGreaterThan(100);
    expect((await as(operator).get(`/api/quality/measurements/${m.measurementId}/trace`)).status).toBe(403);
    expect((await as(quality).get('/api/quality/measurements/nope/trace')).status).toBe(404);
  });

  it('gives a capture CSV back as posted, and its timings rebuilt with the recipe hash to the stored SHA-256', async () => {
    await addUnits([{ serial: 'RAW-CAP-1' }]);
    const { csv } = simulateCapture(
      {
        polePairs: 4,
        hallRiseDeg: line.recipe.body.hallRiseDeg,
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
      .field('measurementId', 'raw-cap-1')
      .field('serial', 'RAW-CAP-1')
      .attach('capture', Buffer.from(csv), 'capture.csv');
    expect(res.status).toBe(202);
    await computeCalibration(ctx, { measurementPk: await pkOf('raw-cap-1'), recipeId: line.recipe.id });
    const raw = await as(quality).get('/api/quality/measurements/raw-cap-1/as-posted');
    expect(raw.headers['content-type']).toMatch(/text\/csv/);
    expect(raw.text).toBe(csv);
    const trace = await as(quality).get('/api/quality/measurements/raw-cap-1/trace');
    const rebuilt = canonicalMeasurementText(raw.text, 'capture', {
      recipe: trace.body.recipe.body,
      measurementId: 'raw-cap-1',
      serial: 'RAW-CAP-1',
      direction: trace.body.segments[0].direction,
    });
    expect(sha256(rebuilt)).toBe(raw.headers['x-stored-sha256']);
  });
});
