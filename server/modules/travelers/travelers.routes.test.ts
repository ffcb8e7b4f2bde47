import request from 'supertest';
import { PDFParse } from 'pdf-parse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { postAndCompute } from '#tests/harness/station-post';
import { renderFirstTraveler } from './travelers.service';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let other: Awaited<ReturnType<typeof createLineFixture>>;
let operator = '';

const cookieOf = (username: string, password: string) => sessionCookie(t.app, username, password);

/** Posts a measurement, computes it and renders print 1, as the station and the worker would. */
async function calibratedUnit(serial: string, offsetDeg = 2.5) {
  const m = simulatedMeasurement(line.recipe.body, serial, { offsetDeg });
  const calibrationId = await postAndCompute(t, line, m);
  await renderFirstTraveler(t.deps.pool, calibrationId, new Date());
  return { measurement: m, calibrationId };
}

async function pdfText(buf: Buffer): Promise<string> {
  const parser = new PDFParse({ data: new Uint8Array(buf) });
  try {
    return (await parser.getText()).text;
  } finally {
    await parser.destroy();
  }
}

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-40' });
  other = await createLineFixture(t.deps.db, { code: 'TM-60', polePairs: 6, stationName: 'EOL-OTHER' });
  operator = await cookieOf('olga.operator', 'demo-operator-pass');
});
afterAll(async () => {
  await t?.close();
});

describe('unit travelers', () => {
  it('serves the current traveler as a PDF with its stored SHA-256', async () => {
    await calibratedUnit('SN-TRAV-1');
    const res = await request(t.app)
      .get('/api/units/SN-TRAV-1/traveler.pdf')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', operator)
      .buffer(true);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const { rows } = await t.database.pool.query(
      `select sha256 from travelers t join units u on u.id = t.unit_id where u.serial = 'SN-TRAV-1'`,
    );
    expect(res.headers['x-content-sha256']).toBe(rows[0].sha256);
    const text = await pdfText(res.body as Buffer);
    expect(text).toContain('SN-TRAV-1');
    expect(text).toContain('IEC 60204-1');
  });

  it('marks every print after the first as a reprint with its number, and audits each', async () => {
    const { calibrationId } = await calibratedUnit('SN-TRAV-2');
    const first = await request(t.app)
      .post('/api/units/SN-TRAV-2/traveler/print')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', operator)
      .send({ pageSize: 'A4' });
    expect(first.status).toBe(201);
    expect(first.body.printNumber).toBe(1);
    const second = await request(t.app)
      .post('/api/units/SN-TRAV-2/traveler/print')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', operator)
      .send({});
    expect(second.body.printNumber).toBe(2);
    const doc = await request(t.app)
      .get(second.body.url)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', operator)
      .buffer(true);
    expect(await pdfText(doc.body as Buffer)).toMatch(/REPRINT\s*2/);
    const { rows } = await t.database.pool.query(
      `select action from audit_log where subject_type = 'calibration' and subject_id = $1 order by id`,
      [calibrationId],
    );
    expect(rows.map((r) => r.action)).toEqual(['travelers.printed', 'travelers.reprinted']);
  });

  it('lets the station that measured the unit fetch its traveler, and no other station', async () => {
    await calibratedUnit('SN-TRAV-3');
    const own = await request(t.app).get('/api/units/SN-TRAV-3/traveler.pdf').set('X-Station-Key', line.key);
    expect(own.status).toBe(200);
    const foreign = await request(t.app)
      .get('/api/units/SN-TRAV-3/traveler.pdf')
      .set('X-Station-Key', other.key);
    expect(foreign.status).toBe(403);
  });

  it('says clearly when a unit has no traveler yet', async () => {
    const res = await request(t.app)
      .post('/api/units')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', operator)
      .send({ serial: 'SN-TRAV-NONE', modelId: line.model.id });
    expect(res.status).toBe(201);
    const pdf = await request(t.app)
      .get('/api/units/SN-TRAV-NONE/traveler.pdf')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', operator);
    expect(pdf.status).toBe(404);
    expect(pdf.body.error.code).toBe('travelers.none');
  });

  it('renders print 1 only once when the job runs twice', async () => {
    const { calibrationId } = await calibratedUnit('SN-TRAV-4');
    const [a, b] = await Promise.all([
      renderFirstTraveler(t.deps.pool, calibrationId, new Date()),
      renderFirstTraveler(t.deps.pool, calibrationId, new Date()),
    ]);
    expect(a).toBe(b);
    const { rows } = await t.database.pool.query(
      'select count(*)::int as n from travelers where calibration_id = $1',
      [calibrationId],
    );
    expect(rows[0].n).toBe(1);
  });
});
