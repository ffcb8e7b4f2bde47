import request from 'supertest';
import { PDFParse } from 'pdf-parse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { attendStation, createStation, createStationKey } from '../stations/stations.service';
import { insertUser, listUsers } from '../users/users.repository';
import { planRunOrder } from './gauge-studies.service';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let second: { id: string; key: string };
let engineer: string;
let studyId: string;
const PARTS = ['GS-P-01', 'GS-P-02', 'GS-P-03'];
const TRUE_OFFSET: Record<string, number> = { 'GS-P-01': 1, 'GS-P-02': 3, 'GS-P-03': 5 };

async function count(table: string, where = 'true', params: unknown[] = []): Promise<number> {
  const { rows } = await t.database.pool.query(
    `select count(*)::int as n from ${table} where ${where}`,
    params,
  );
  return rows[0].n;
}

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'GS-40', stationName: 'EOL-GS1' });
  const s2 = await createStation(t.deps.db, null, {
    name: 'EOL-GS2',
    line: 'Line 1',
    allowedModelIds: [line.model.id],
  });
  second = { id: s2.id, key: (await createStationKey(t.deps.db, null, s2.id, 'test')).key };
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  for (const serial of PARTS) {
    await request(t.app)
      .post('/api/units')
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({ serial, modelId: line.model.id })
      .expect(201);
  }
});
afterAll(async () => {
  await t?.close();
});

const nextFor = async (key: string) =>
  (await request(t.app).get('/api/station/gauge-studies/next').set('X-Station-Key', key)).body.steps[0];
const postTrial = (key: string, body: object) =>
  request(t.app).post(`/api/station/gauge-studies/${studyId}/readings`).set('X-Station-Key', key).send(body);

describe('planning the run order', () => {
  it('has every part once per appraiser and trial, shuffled, and the same for the same seed', () => {
    const order = planRunOrder(10, 3, 3, 11);
    expect(order).toHaveLength(90);
    const round = order.filter((s) => s.appraiser === 1 && s.trial === 2).map((s) => s.part);
    expect([...round].sort((a, b) => a - b)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9]);
    expect(round).not.toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9]);
    expect(planRunOrder(10, 3, 3, 11)).toEqual(order);
  });
});

describe('a gauge study run by two stations', () => {
  it('is designed by an engineer and refused to an operator', async () => {
    const body = {
      name: 'Two rigs, three parts',
      modelId: line.model.id,
      appraiserKind: 'station',
      appraiserIds: [line.station.id, second.id],
      partSerials: PARTS,
      trials: 2,
      toleranceDeg: 2,
      seed: 5,
    };
    const operator = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
    expect(
      (
        await request(t.app)
          .post('/api/gauge-studies')
          .set('Cookie', operator)
          .set('Origin', TEST_ORIGIN)
          .send(body)
      ).status,
    ).toBe(403);
    const res = await request(t.app)
      .post('/api/gauge-studies')
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send(body);
    expect(res.status).toBe(201);
    studyId = res.body.study.id;
    expect(res.body.study).toMatchObject({ status: 'open', done: 0, total: 12, results: null });
  });

  it('guides each station through its trials, never changes the units, and finishes with the last trial', async () => {
    const unitsBefore = (
      await t.database.pool.query(`select * from units where serial like 'GS-P-%' order by serial`)
    ).rows;
    let seed = 100;
    for (const key of [line.key, second.key]) {
      for (;;) {
        const step = await nextFor(key);
        if (!step?.serial) break;
        expect(step.trial).toBeGreaterThanOrEqual(1);
        const m = simulatedMeasurement(line.recipe.body, step.serial, {
          offsetDeg: TRUE_OFFSET[step.serial],
          seed: seed++,
        });
        const res = await postTrial(key, { measurement: m });
        expect(res.status).toBe(201);
        expect(res.body.reading).toMatchObject({ serial: step.serial, trial: step.trial });
      }
    }
    expect(
      (await t.database.pool.query(`select * from units where serial like 'GS-P-%' order by serial`)).rows,
    ).toEqual(unitsBefore);
    expect(await count('measurements', `serial like 'GS-P-%'`)).toBe(0);
    const detail = (await request(t.app).get(`/api/gauge-studies/${studyId}`).set('Cookie', engineer)).body
      .study;
    expect(detail.status).toBe('finished');
    expect(detail.results.data).toHaveLength(3);
    // The parts' true offsets are 1°, 3° and 5°: part variation dominates and the system reads them apart.
    expect(detail.results.anova.pv).toBeGreaterThan(1.5);
    expect(detail.results.anova.percentOfTv.grr).toBeLessThan(10);
    expect(detail.results.reading.reading).toBe('acceptable');
  });

  it('prints a report with the design, the data, the ANOVA table and the reading', async () => {
    const res = await request(t.app)
      .get(`/api/gauge-studies/${studyId}/report.pdf`)
      .set('Cookie', engineer)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const parser = new PDFParse({ data: new Uint8Array(res.body as Buffer) });
    const text = (await parser.getText()).text;
    await parser.destroy();
    expect(text).toContain('Gauge R&R study report');
    expect(text).toContain('Two rigs, three parts');
    expect(text).toContain('GS-P-02');
    expect(text).toContain('ANOVA TABLE');
    expect(text).toMatch(/The measurement system is acceptable/);
  });

  it('takes no further trial once finished', async () => {
    const m = simulatedMeasurement(line.recipe.body, 'GS-P-01', { offsetDeg: 1, seed: 999 });
    const res = await postTrial(line.key, { measurement: m, trial: 1, repeatReason: 'unit was not seated' });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('gauge_studies.finished');
  });
});

describe('a spoiled trial', () => {
  it('is measured again only with the trial number and a reason, and the repeat counts (audited)', async () => {
    const res = await request(t.app)
      .post('/api/gauge-studies')
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({
        name: 'Spoiled trial',
        modelId: line.model.id,
        appraiserKind: 'station',
        appraiserIds: [line.station.id, second.id],
        partSerials: PARTS.slice(0, 2),
        trials: 2,
        toleranceDeg: 2,
      });
    studyId = res.body.study.id;
    const m1 = simulatedMeasurement(line.recipe.body, 'GS-P-01', { offsetDeg: 1, seed: 1 });
    expect((await postTrial(line.key, { measurement: m1, trial: 1 })).status).toBe(201);
    const m2 = simulatedMeasurement(line.recipe.body, 'GS-P-01', { offsetDeg: 1, seed: 2 });
    const refused = await postTrial(line.key, { measurement: m2, trial: 1 });
    expect(refused.status).toBe(409);
    expect(refused.body.error.code).toBe('gauge_studies.trial_done');
    const again = await postTrial(line.key, { measurement: m2, trial: 1, repeatReason: 'coupling slipped' });
    expect(again.status).toBe(201);
    expect(again.body.reading.repeatReason).toBe('coupling slipped');
    const detail = (await request(t.app).get(`/api/gauge-studies/${studyId}`).set('Cookie', engineer)).body
      .study;
    expect(detail.done).toBe(1);
    expect(detail.readings).toHaveLength(2);
    expect(
      await count('audit_log', `action = 'gauge_studies.trial_repeated' and reason = 'coupling slipped'`),
    ).toBe(1);
  });

  it('refuses a unit that is not a part of the study, and a station that is not an appraiser', async () => {
    const m = simulatedMeasurement(line.recipe.body, 'GS-P-03', { offsetDeg: 5, seed: 3 });
    const res = await postTrial(line.key, { measurement: m });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('gauge_studies.not_part');
  });
});

describe('a gauge study whose appraisers are operators at one station', () => {
  it('guides whoever is signed in at the station, hands over to the next operator, and gives results per operator', async () => {
    const olga = (await listUsers(t.deps.db)).find((u) => u.username === 'olga.operator')!;
    const otto = await insertUser(t.deps.db, {
      username: 'otto.operator',
      displayName: 'Otto Operator',
      role: 'operator',
    });
    const choices = await request(t.app).get('/api/gauge-studies/operators').set('Cookie', engineer);
    expect(choices.status).toBe(200);
    expect(choices.body.operators.map((o: { name: string }) => o.name)).toEqual(
      expect.arrayContaining([olga.displayName, 'Otto Operator']),
    );
    const withoutStation = await request(t.app)
      .post('/api/gauge-studies')
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({
        name: 'Two operators, one rig',
        modelId: line.model.id,
        appraiserKind: 'operator',
        appraiserIds: [olga.id, otto.id],
        partSerials: PARTS,
        trials: 2,
        toleranceDeg: 2,
      });
    expect(withoutStation.status).toBe(422);
    expect(withoutStation.body.error.message).toMatch(/Choose the station where the operators measure/);
    const created = await request(t.app)
      .post('/api/gauge-studies')
      .set('Cookie', engineer)
      .set('Origin', TEST_ORIGIN)
      .send({
        name: 'Two operators, one rig',
        modelId: line.model.id,
        appraiserKind: 'operator',
        appraiserIds: [olga.id, otto.id],
        stationId: second.id,
        partSerials: PARTS,
        trials: 2,
        toleranceDeg: 2,
        seed: 9,
      });
    expect(created.status).toBe(201);
    studyId = created.body.study.id;
    expect(created.body.study.appraisers.map((a: { name: string }) => a.name)).toEqual([
      olga.displayName,
      'Otto Operator',
    ]);
    const stepHere = async () =>
      (
        (await request(t.app).get('/api/station/gauge-studies/next').set('X-Station-Key', second.key)).body
          .steps as {
          studyId: string;
          serial: string | null;
          trial: number | null;
          appraiserLabel: string;
          waitingFor: string[];
        }[]
      ).find((s) => s.studyId === studyId);
    // Nobody signed in: the station shows the study and whom it waits for, and takes no trial.
    const idle = await stepHere();
    expect(idle).toMatchObject({ serial: null, waitingFor: [olga.displayName, 'Otto Operator'] });
    const m0 = simulatedMeasurement(line.recipe.body, PARTS[0], { offsetDeg: 1, seed: 500 });
    const refused = await postTrial(second.key, { measurement: m0 });
    expect(refused.status).toBe(409);
    expect(refused.body.error.code).toBe('gauge_studies.not_appraiser');
    // The study's station only: the other station is not where these operators measure.
    await attendStation(t.deps.db, { ...olga, role: 'operator' }, line.station.id, new Date());
    expect((await postTrial(line.key, { measurement: m0 })).status).toBe(409);
    let seed = 600;
    for (const person of [olga, otto]) {
      await attendStation(t.deps.db, { ...person, role: 'operator' }, second.id, new Date());
      for (;;) {
        const step = await stepHere();
        if (!step?.serial) {
          // Done: the station names who measured (a finished study leaves the guide altogether).
          if (step) expect(step.appraiserLabel).toBe(person.displayName);
          break;
        }
        const m = simulatedMeasurement(line.recipe.body, step.serial, {
          offsetDeg: TRUE_OFFSET[step.serial],
          seed: seed++,
        });
        const res = await postTrial(second.key, { measurement: m });
        expect(res.status).toBe(201);
        expect(res.body.reading).toMatchObject({ serial: step.serial, trial: step.trial });
      }
      if (person === olga) expect((await stepHere())?.waitingFor).toEqual(['Otto Operator']);
    }
    const detail = (await request(t.app).get(`/api/gauge-studies/${studyId}`).set('Cookie', engineer)).body
      .study;
    expect(detail.status).toBe('finished');
    // data[part][appraiser][trial]: two operators, two trials each.
    expect(detail.results.data.map((p: number[][]) => p.map((a) => a.length))).toEqual([
      [2, 2],
      [2, 2],
      [2, 2],
    ]);
    expect(detail.results.reading.reading).toBe('acceptable');
    const rows = (
      await t.database.pool.query(
        'select distinct appraiser, operator_id from gauge_study_measurements where study_id = $1 order by appraiser',
        [studyId],
      )
    ).rows;
    expect(rows).toEqual([
      { appraiser: 0, operator_id: olga.id },
      { appraiser: 1, operator_id: otto.id },
    ]);
  });
});
