import request from 'supertest';
import { PDFParse } from 'pdf-parse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let engineer: string;
let operator: string;
let refId: string;
let certifiedDeg: number;
/** The first production unit the station measured once qualified (repeated while it is locked). */
let firstProduction: ReturnType<typeof simulatedMeasurement>;

const T0 = new Date('2026-03-02T08:00:00Z');
const minutes = (n: number) => new Date(T0.getTime() + n * 60_000);

const postProduction = (body: unknown) =>
  request(t.app)
    .post('/api/station/measurements')
    .set('X-Station-Key', line.key)
    .send(body as object);
const postReading = (body: unknown) =>
  request(t.app)
    .post('/api/station/qualification-readings')
    .set('X-Station-Key', line.key)
    .send(body as object);

async function count(table: string, where = 'true', params: unknown[] = []): Promise<number> {
  const { rows } = await t.database.pool.query(
    `select count(*)::int as n from ${table} where ${where}`,
    params,
  );
  return rows[0].n;
}

async function unitRow(serial: string) {
  const { rows } = await t.database.pool.query(
    'select status, attempts, current_offset_deg, current_calibration_id, updated_at from units where serial = $1',
    [serial],
  );
  return rows[0];
}

beforeAll(async () => {
  t = await createTestApp();
  t.setNow(T0);
  line = await createLineFixture(t.deps.db, { code: 'QM-40', stationName: 'EOL-Q1' });
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  operator = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
  // The reference unit: registered like any unit, then marked as reference.
  await request(t.app)
    .post('/api/units')
    .set('Cookie', engineer)
    .set('Origin', TEST_ORIGIN)
    .send({ serial: 'R-QM-01', modelId: line.model.id })
    .expect(201);
  const created = await request(t.app)
    .post('/api/qualification/reference-units')
    .set('Cookie', engineer)
    .set('Origin', TEST_ORIGIN)
    .send({ serial: 'r-qm-01', toleranceDeg: 0.3 });
  expect(created.status).toBe(201);
  refId = created.body.referenceUnit.id;
  // Certify it from three readings at the station (recorded, not judged, while uncertified).
  for (const seed of [1, 2, 3]) {
    const r = await postReading(simulatedMeasurement(line.recipe.body, 'R-QM-01', { offsetDeg: 3, seed }));
    expect(r.status).toBe(201);
    expect(r.body.run.verdict).toBe('recorded');
  }
  const cert = await request(t.app)
    .post(`/api/qualification/reference-units/${refId}/certify`)
    .set('Cookie', engineer)
    .set('Origin', TEST_ORIGIN)
    .send({ stationId: line.station.id, readings: 3 });
  expect(cert.status).toBe(200);
  certifiedDeg = cert.body.referenceUnit.certifiedOffsetDeg;
  expect(certifiedDeg).toBeCloseTo(3, 0);
  expect(cert.body.referenceUnit.certifiedFrom).toMatchObject({ n: 3 });
  await request(t.app)
    .put('/api/qualification/shifts')
    .set('Cookie', engineer)
    .set('Origin', TEST_ORIGIN)
    .send({
      shifts: [
        { name: 'Early', startsAt: '06:00' },
        { name: 'Late', startsAt: '14:00' },
      ],
    })
    .expect(200);
});
afterAll(async () => {
  await t?.close();
});

describe('a station without a policy', () => {
  it('accepts production as before', async () => {
    const res = await postProduction(simulatedMeasurement(line.recipe.body, 'SN-Q-FREE'));
    expect(res.status).toBe(202);
  });
});

describe('qualification lockout', () => {
  it('when a policy is set and the station has never passed, then production is refused with 423 and nothing is stored', async () => {
    const set = await request(t.app)
      .put(`/api/stations/${line.station.id}/qualification/policy`)
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({ atShiftStart: true, everyHours: 4, everyUnits: 3, referenceUnitIds: [refId] });
    expect(set.status).toBe(200);
    const before = await count('measurements');
    const m = simulatedMeasurement(line.recipe.body, 'SN-Q-LOCKED');
    const res = await postProduction(m);
    expect(res.status).toBe(423);
    expect(res.body.error.code).toBe('qualification.overdue');
    expect(res.body.error.message).toMatch(/^Overdue — measure reference unit R-QM-01\./);
    expect(await count('measurements')).toBe(before);
    expect(await count('units', `serial = 'SN-Q-LOCKED'`)).toBe(0);
  });

  it('refuses a reference unit posted as production', async () => {
    const res = await postProduction(simulatedMeasurement(line.recipe.body, 'R-QM-01'));
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('qualification.reference_unit');
  });

  it('when the reference unit reads within tolerance, then the station is qualified and the reference unit is unchanged', async () => {
    const refBefore = await unitRow('R-QM-01');
    const res = await postReading(
      simulatedMeasurement(line.recipe.body, 'R-QM-01', { offsetDeg: 3, seed: 4 }),
    );
    expect(res.status).toBe(201);
    expect(res.body.run.verdict).toBe('pass');
    expect(Math.abs(res.body.run.deviationDeg)).toBeLessThanOrEqual(0.3);
    // Passed 08:00; the 14:00 shift start comes before 08:00 + 4 h? No: 12:00 is first.
    expect(res.body.state).toMatchObject({
      kind: 'qualified',
      locked: false,
      validUntil: '2026-03-02T12:00:00.000Z',
    });
    expect(res.body.state.sentence).toBe('Qualified until 12:00 or for 3 more units.');
    expect(await unitRow('R-QM-01')).toEqual(refBefore);
    expect(await count('measurements', `serial = 'R-QM-01'`)).toBe(0);
    expect(await count('calibrations c join units u on u.id = c.unit_id', `u.serial = 'R-QM-01'`)).toBe(0);
    expect(
      await count(
        'travelers t join calibrations c on c.id = t.calibration_id join units u on u.id = c.unit_id',
        `u.serial = 'R-QM-01'`,
      ),
    ).toBe(0);
    t.setNow(minutes(1));
    firstProduction = simulatedMeasurement(line.recipe.body, 'SN-Q-OK-1');
    expect((await postProduction(firstProduction)).status).toBe(202);
  });

  it('answers a repeated reading with the stored one and stores nothing new', async () => {
    t.setNow(minutes(2));
    const m = simulatedMeasurement(line.recipe.body, 'R-QM-01', { offsetDeg: 3, seed: 5 });
    const first = await postReading(m);
    const again = await postReading(m);
    expect(again.status).toBe(200);
    expect(again.body.run.id).toBe(first.body.run.id);
    expect(await count('qualification_runs', 'measurement_id = $1', [m.measurementId])).toBe(1);
  });

  it('locks again after the unit count, and after the time limit', async () => {
    // Passed again at 08:02; three production units reach the limit of 3.
    t.setNow(minutes(3));
    for (const serial of ['SN-Q-OK-2', 'SN-Q-OK-3', 'SN-Q-OK-4']) {
      expect((await postProduction(simulatedMeasurement(line.recipe.body, serial))).status).toBe(202);
    }
    const res = await postProduction(simulatedMeasurement(line.recipe.body, 'SN-Q-OK-5'));
    expect(res.status).toBe(423);
    expect(res.body.error.message).toMatch(/3 production units have been measured/);
    t.setNow(minutes(10));
    await postReading(simulatedMeasurement(line.recipe.body, 'R-QM-01', { offsetDeg: 3, seed: 6 })).expect(
      201,
    );
    t.setNow(minutes(4 * 60 + 10));
    const late = await postProduction(simulatedMeasurement(line.recipe.body, 'SN-Q-LATE'));
    expect(late.status).toBe(423);
    expect(late.body.error.message).toMatch(/ran out at 12:10/);
  });

  it('while locked, a repeat of a stored production measurement gets its stored answer; a new one is refused and stores nothing', async () => {
    // Still 12:10 + : the time limit ran out and the station is locked.
    const before = await count('measurements');
    const calsBefore = await count('calibrations');
    const again = await postProduction(firstProduction);
    expect([200, 202]).toContain(again.status);
    expect(again.body).toMatchObject({
      measurementId: firstProduction.measurementId,
      serial: 'SN-Q-OK-1',
      repeated: true,
    });
    // The same key with another body is still the usual conflict, never a way around the lock.
    const reused = await postProduction({ ...firstProduction, serial: 'SN-Q-REUSED' });
    expect(reused.status).toBe(409);
    expect(reused.body.error.code).toBe('measurements.id_conflict');
    const fresh = await postProduction(simulatedMeasurement(line.recipe.body, 'SN-Q-NEW-WHILE-LOCKED'));
    expect(fresh.status).toBe(423);
    expect(await count('measurements')).toBe(before);
    expect(await count('calibrations')).toBe(calsBefore);
    expect(await count('units', `serial in ('SN-Q-REUSED', 'SN-Q-NEW-WHILE-LOCKED')`)).toBe(0);
  });

  it('when the reference unit reads out of tolerance, then the station is locked as failed and engineers get an e-mail', async () => {
    t.setNow(minutes(5 * 60));
    const res = await postReading(
      simulatedMeasurement(line.recipe.body, 'R-QM-01', { offsetDeg: 4, seed: 7 }),
    );
    expect(res.status).toBe(201);
    expect(res.body.run.verdict).toBe('fail');
    expect(res.body.state).toMatchObject({ kind: 'failed', locked: true });
    const refused = await postProduction(simulatedMeasurement(line.recipe.body, 'SN-Q-FAILED'));
    expect(refused.status).toBe(423);
    expect(refused.body.error.code).toBe('qualification.failed');
    const mail = t.mail.messages().filter((m) => m.to.includes('evan.engineer@corvane.example'));
    expect(mail.some((m) => /EOL-Q1 failed its qualification/.test(m.subject))).toBe(true);
    // …and an alert in the engineers' list, naming the reference unit and the reading.
    const alerts = await request(t.app).get('/api/alerts').set('Cookie', engineer);
    expect(alerts.status).toBe(200);
    const raised = alerts.body.alerts.filter(
      (a: { chart: string; station: string }) => a.chart === 'qualification' && a.station === 'EOL-Q1',
    );
    expect(raised).toHaveLength(1);
    expect(raised[0]).toMatchObject({
      model: 'QM-40',
      status: 'open',
      chartLabel: 'Reference-unit qualification',
    });
    expect(raised[0].ruleText).toMatch(/^Reference unit R-QM-01 read \+\d\.\d\d° from its certified value/);
    expect(raised[0].points[0]).toMatchObject({ serial: 'R-QM-01', calibrationId: res.body.run.id });
  });

  it('lets an engineer lift the lock for a limited time with a reason (audited), and locks again when it expires', async () => {
    const denied = await request(t.app)
      .post(`/api/stations/${line.station.id}/qualification/override`)
      .set('Cookie', operator)
      .set('Origin', TEST_ORIGIN)
      .send({ reason: 'please', minutes: 30 });
    expect(denied.status).toBe(403);
    const lifted = await request(t.app)
      .post(`/api/stations/${line.station.id}/qualification/override`)
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({ reason: 'reference unit dropped, spare on its way', minutes: 30 });
    expect(lifted.status).toBe(201);
    expect(
      await count(
        'audit_log',
        `action = 'qualification.lock_lifted' and reason like 'reference unit dropped%'`,
      ),
    ).toBe(1);
    expect((await postProduction(simulatedMeasurement(line.recipe.body, 'SN-Q-OVERRIDE'))).status).toBe(202);
    const state = await request(t.app)
      .get(`/api/stations/${line.station.id}/qualification`)
      .set('Cookie', operator);
    expect(state.body.kind).toBe('override');
    t.setNow(minutes(5 * 60 + 30));
    const after = await postProduction(simulatedMeasurement(line.recipe.body, 'SN-Q-EXPIRED'));
    expect(after.status).toBe(423);
  });

  it('lists the readings for the bias chart, oldest first, with the certified value and tolerance', async () => {
    const res = await request(t.app)
      .get(`/api/stations/${line.station.id}/qualification/readings`)
      .set('Cookie', operator);
    expect(res.status).toBe(200);
    const verdicts = res.body.readings.map((r: { verdict: string }) => r.verdict);
    expect(verdicts.slice(0, 3)).toEqual(['recorded', 'recorded', 'recorded']);
    expect(verdicts.at(-1)).toBe('fail');
    expect(res.body.readings.at(-1).toleranceDeg).toBe(0.3);
  });

  it('prints a qualification slip of a reading on demand, and no traveler', async () => {
    const readings = (
      await request(t.app)
        .get(`/api/stations/${line.station.id}/qualification/readings`)
        .set('Cookie', operator)
    ).body.readings;
    const failed = readings.at(-1);
    const res = await request(t.app)
      .get(`/api/qualification/readings/${failed.id}/slip.pdf`)
      .set('Cookie', operator)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    expect(res.status).toBe(200);
    const parser = new PDFParse({ data: new Uint8Array(res.body as Buffer) });
    const text = (await parser.getText()).text;
    await parser.destroy();
    expect(text).toContain('Station qualification slip');
    expect(text).toContain('FAILED');
    expect(text).toContain('R-QM-01');
    expect(await count('travelers')).toBe(0);
  });

  it('refuses to change or delete a reading, even for the owner', async () => {
    const owner = t.database.pool;
    await expect(owner.query(`update qualification_runs set offset_deg = 0`)).rejects.toThrow();
    await expect(owner.query(`delete from qualification_overrides`)).rejects.toThrow();
  });
});

describe('certifying a reference unit from chosen readings', () => {
  it('takes the mean and expanded uncertainty of the chosen readings, names each left out with a reason, and audits it', async () => {
    const listed = await request(t.app)
      .get(`/api/qualification/reference-units/${refId}/readings?stationId=${line.station.id}`)
      .set('Cookie', engineer);
    expect(listed.status).toBe(200);
    const readings: { id: string; offsetDeg: number; verdict: string }[] = listed.body.readings;
    const failed = readings.find((r) => r.verdict === 'fail')!;
    const chosen = readings.filter((r) => r.verdict !== 'fail');
    const missingReason = await request(t.app)
      .post(`/api/qualification/reference-units/${refId}/certify`)
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({
        stationId: line.station.id,
        readingIds: chosen.map((r) => r.id),
        excluded: [{ readingId: failed.id, reason: '' }],
      });
    expect(missingReason.status).toBe(400);
    const res = await request(t.app)
      .post(`/api/qualification/reference-units/${refId}/certify`)
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({
        stationId: line.station.id,
        readingIds: chosen.map((r) => r.id),
        excluded: [{ readingId: failed.id, reason: 'Unit seated crooked in the fixture' }],
      });
    expect(res.status).toBe(200);
    // Mean and 2·s/√n of the chosen values (GUM, JCGM 100:2008, type A with k = 2), computed here directly.
    const values = chosen.map((r) => r.offsetDeg);
    const mean = values.reduce((a, v) => a + v, 0) / values.length;
    const sd = Math.sqrt(values.reduce((a, v) => a + (v - mean) ** 2, 0) / (values.length - 1));
    expect(res.body.referenceUnit.certifiedOffsetDeg).toBeCloseTo(mean, 10);
    expect(res.body.referenceUnit.certifiedFrom).toMatchObject({
      n: values.length,
      readingIds: chosen.map((r) => r.id),
      excluded: [{ readingId: failed.id, reason: 'Unit seated crooked in the fixture' }],
    });
    expect(res.body.referenceUnit.certifiedFrom.expandedUncertaintyDeg).toBeCloseTo(
      (2 * sd) / Math.sqrt(values.length),
      10,
    );
    expect(
      await count(
        'audit_log',
        `action = 'qualification.reference_certified' and reason like '%Unit seated crooked in the fixture'`,
      ),
    ).toBe(1);
  });

  it('refuses a reading of another station or unit, and an operator', async () => {
    const bogus = await request(t.app)
      .post(`/api/qualification/reference-units/${refId}/certify`)
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({ stationId: line.station.id, readingIds: [refId, line.station.id] });
    expect(bogus.status).toBe(422);
    expect(bogus.body.error.code).toBe('qualification.reading_not_of_unit');
    const denied = await request(t.app)
      .post(`/api/qualification/reference-units/${refId}/certify`)
      .set('Cookie', operator)
      .set('Origin', TEST_ORIGIN)
      .send({ stationId: line.station.id, readings: 2 });
    expect(denied.status).toBe(403);
  });
});

describe('plant shifts', () => {
  const putShifts = (cookie: string, body: unknown) =>
    request(t.app)
      .put('/api/qualification/shifts')
      .set('Cookie', cookie)
      .set('Origin', TEST_ORIGIN)
      .send(body as object);

  it('refuses two shifts at the same start or of the same name, and a malformed time, saying which', async () => {
    const res = await putShifts(engineer, {
      shifts: [
        { name: 'Early', startsAt: '06:00' },
        { name: 'early', startsAt: '06:00' },
        { name: 'Night', startsAt: '25:00' },
      ],
    });
    expect(res.status).toBe(400);
    const issues: { path: string; message: string }[] = res.body.error.issues;
    expect(issues.map((i) => i.path).sort()).toEqual([
      'shifts.1.name',
      'shifts.1.startsAt',
      'shifts.2.startsAt',
    ]);
    expect(issues.find((i) => i.path === 'shifts.1.startsAt')!.message).toMatch(/Two shifts start at 06:00/);
  });

  it('are replaced by an engineer (audited, sorted by start) and refused to an operator', async () => {
    const res = await putShifts(engineer, {
      shifts: [
        { name: 'Night', startsAt: '22:00' },
        { name: 'Early', startsAt: '06:00' },
        { name: 'Late', startsAt: '14:00' },
      ],
    });
    expect(res.status).toBe(200);
    expect(res.body.shifts.map((s: { name: string }) => s.name)).toEqual(['Early', 'Late', 'Night']);
    expect(res.body.timeZone).toBeTruthy();
    expect(await count('audit_log', `action = 'qualification.shifts_set'`)).toBe(2);
    expect((await putShifts(operator, { shifts: [] })).status).toBe(403);
  });
});
