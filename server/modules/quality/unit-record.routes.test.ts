import { createHash } from 'node:crypto';
import { strFromU8, unzipSync } from 'fflate';
import { PDFParse } from 'pdf-parse';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { computeCalibration, type MeasurementsContext } from '../measurements/measurements.service';
import { ENGINE_VERSION } from '#shared/calibration';
import { SAFETY_CAUTIONS } from '#shared/wording';
import type { UnitRecord } from '#shared/schemas/unit-record';
import { MANIFEST_NAME } from './unit-record.export';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let ctx: MeasurementsContext;
let quality = '';
let engineer = '';
let operator = '';
let admin = '';
const SERIAL = 'REC-0001';
const measured: string[] = [];

const as = (cookie: string) => ({
  get: (url: string) => request(t.app).get(url).set('Cookie', cookie),
  post: (url: string, body: object) =>
    request(t.app).post(url).set('Origin', TEST_ORIGIN).set('Cookie', cookie).send(body),
});

// Rows the database stamps itself (a registration, audit entries) carry its own clock; the test clock runs a
// little ahead of it, so the record's order is the order things were done in.
const base = Date.now() + 60_000;
const at = (minutes: number) => new Date(base + minutes * 60_000);

const sha256 = (b: Uint8Array | string) => createHash('sha256').update(b).digest('hex');

/** Receives the response body as bytes (supertest parses only text and JSON by itself). */
function binary(res: request.Response & { setEncoding?: unknown }, cb: (e: Error | null, b: Buffer) => void) {
  const chunks: Buffer[] = [];
  (res as unknown as NodeJS.ReadableStream).on('data', (c: Buffer) => chunks.push(c));
  (res as unknown as NodeJS.ReadableStream).on('end', () => cb(null, Buffer.concat(chunks)));
}

async function pdfText(buf: Buffer): Promise<string> {
  const parser = new PDFParse({ data: new Uint8Array(buf) });
  try {
    return (await parser.getText()).text;
  } finally {
    await parser.destroy();
  }
}

/** Posts a simulated measurement at `at` and computes it as the worker would. */
async function measure(offsetDeg: number, at: string) {
  const m = simulatedMeasurement(line.recipe.body, SERIAL, { offsetDeg });
  t.setNow(new Date(at));
  const res = await request(t.app).post('/api/station/measurements').set('X-Station-Key', line.key).send(m);
  expect(res.status).toBe(202);
  const { rows } = await t.database.pool.query('select id from measurements where measurement_id = $1', [
    m.measurementId,
  ]);
  await computeCalibration(ctx, { measurementPk: rows[0].id, recipeId: line.recipe.id });
  measured.push(m.measurementId);
  return m.measurementId;
}

async function auditCount(action: string, format: string) {
  const { rows } = await t.database.pool.query(
    `select count(*)::int as n from audit_log where action = $1 and after->>'format' = $2 and after->>'serial' = $3`,
    [action, format, SERIAL],
  );
  return rows[0].n as number;
}

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-40' });
  ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
  quality = await sessionCookie(t.app, 'quinn.quality', 'demo-quality-pass');
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  operator = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
  admin = await sessionCookie(t.app, 'ada.admin', 'demo-admin-pass');

  // The unit's life: registered on screen, an operator at the panel, a failed attempt, a pass, a
  // programming read-back that differs (held by the line), a release to recalibrate, a traveler print,
  // and a hold under a new investigation.
  t.setNow(at(1));
  expect(
    (await as(quality).post('/api/units', { serial: SERIAL, modelId: line.model.id, hallBoardLot: 'HB-R1' }))
      .status,
  ).toBe(201);
  expect((await as(operator).post(`/api/stations/${line.station.id}/attend`, {})).status).toBe(200);
  await measure(18, at(2).toISOString());
  const passed = await measure(3, at(7).toISOString());
  const result = await request(t.app)
    .get(`/api/station/measurements/${passed}/result`)
    .set('X-Station-Key', line.key);
  const counts = result.body.calibration.offsetCounts as number;
  t.setNow(at(8));
  await request(t.app)
    .post(`/api/station/measurements/${passed}/programming`)
    .set('X-Station-Key', line.key)
    .send({ writtenCounts: counts, readBackCounts: counts + 32 })
    .expect(200);
  t.setNow(at(60));
  await as(quality)
    .post('/api/quality/releases', {
      serials: [SERIAL],
      disposition: 'recalibrate',
      reason: 'Programmer fixture reseated',
    })
    .expect(200);
  t.setNow(at(70));
  await as(operator).post(`/api/units/${SERIAL}/traveler/print`, { pageSize: 'A4' }).expect(201);
  t.setNow(at(300));
  await as(quality)
    .post('/api/quality/holds', {
      serials: [SERIAL],
      reason: 'Customer return: motor stalls at start',
      newInvestigation: { title: 'Stalls at start', customerRef: 'RMA-77' },
    })
    .expect(200);
  t.setNow(at(310));
}, 60_000);
afterAll(async () => {
  await t?.close();
});

describe("a unit's record", () => {
  it('lists everything that happened to the unit in time order, with names instead of ids', async () => {
    const res = await as(quality).get(`/api/units/${SERIAL}/record`);
    expect(res.status).toBe(200);
    const record = res.body as UnitRecord;
    const times = record.timeline.map((e) => e.at);
    expect([...times].sort()).toEqual(times);
    const kinds = record.timeline.map((e) => e.kind);
    for (const k of [
      'registered',
      'measurement',
      'calibration',
      'programming',
      'hold',
      'release',
      'traveler',
      'print',
      'investigation',
      'audit',
    ])
      expect(kinds).toContain(k);
    expect(kinds.filter((k) => k === 'measurement')).toHaveLength(2);
    expect(record.timeline[0]).toMatchObject({ kind: 'registered', who: 'Quinn Abernethy' });

    const measurements = record.timeline.filter((e) => e.kind === 'measurement');
    expect(measurements[0].title).toBe(`Measured at ${line.station.name}, attempt 1`);
    expect(measurements[0].who).toBe('Olga Varnavas');
    expect(measurements[0].details).toContainEqual({
      label: 'Operator at the panel',
      value: 'Olga Varnavas',
    });

    const [failed, pass] = record.timeline.filter((e) => e.kind === 'calibration');
    expect(failed.title).toBe(`Calibrated at ${line.station.name}: FAIL, attempt 1 of 3`);
    expect(failed.tone).toBe('bad');
    // The existing plain name of the check, not its code.
    expect(failed.failedChecks).toContain('Hall offset within limits');
    expect(failed.details).toContainEqual({ label: 'Engine version', value: ENGINE_VERSION });
    expect(failed.details).toContainEqual({ label: 'Recipe', value: 'test 4pp v1' });
    expect(pass.title).toMatch(/PASS, attempt 2 of 3/);

    const programming = record.timeline.find((e) => e.kind === 'programming')!;
    expect(programming.title).toMatch(/read-back MISMATCH/);
    const holds = record.timeline.filter((e) => e.kind === 'hold');
    expect(holds.map((h) => h.who)).toEqual(['Programming check (automatic)', 'Quinn Abernethy']);
    const release = record.timeline.find((e) => e.kind === 'release')!;
    expect(release).toMatchObject({
      title: 'Released with the disposition "recalibrate"',
      who: 'Quinn Abernethy',
    });
    expect(release.details).toContainEqual({ label: 'Reason', value: 'Programmer fixture reseated' });
    expect(record.timeline.find((e) => e.kind === 'print')!.who).toBe('Olga Varnavas');
    expect(record.timeline.find((e) => e.kind === 'investigation')!.title).toMatch(
      /^Linked to INV-\d{4}: Stalls at start$/,
    );
    expect(record.holds.at(-1)).toMatchObject({
      investigation: expect.stringMatching(/^INV-\d{4}$/),
      releasedAt: null,
    });

    // Names, never ids, say who did it.
    const uuid = /[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/i;
    for (const e of record.timeline) {
      expect(e.who ?? '').not.toMatch(uuid);
      expect(e.title.replace(/\(.*?\)/g, '')).not.toMatch(uuid);
    }
    expect(record.recipes[0].limits).toContainEqual({ label: 'Offset window, lowest', value: '−15 °e' });
  });

  it('answers 404 for an unknown serial', async () => {
    const res = await as(quality).get('/api/units/NO-SUCH-1/record');
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe('units.not_found');
  });
});

describe("exporting a unit's record", () => {
  it('gives a PDF calibration record with every attempt, the recipe limits, checks, programming, holds and who did what, and audits it', async () => {
    const before = await auditCount('units.record_exported', 'pdf');
    const res = await as(quality).get(`/api/units/${SERIAL}/record.pdf`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect(res.headers['content-disposition']).toContain(`${SERIAL}-calibration-record.pdf`);
    const pdf = res.body as Buffer;
    expect(res.headers['x-content-sha256']).toBe(sha256(pdf));
    const text = (await pdfText(pdf)).replace(/\s+/g, ' ');
    for (const s of [
      'Unit calibration record',
      SERIAL,
      'ON HOLD',
      'Attempt 1 of 3 · FAIL',
      'Attempt 2 of 3 · PASS',
      'Hall offset within limits',
      'test 4pp v1',
      ENGINE_VERSION,
      'Offset window, lowest',
      'Programming MISMATCH',
      'Programmer fixture reseated',
      'Customer return: motor stalls at start',
      'WHO DID WHAT AND WHEN',
      'Quinn Abernethy',
      measured[0],
      SAFETY_CAUTIONS[1],
    ])
      expect(text).toContain(s);
    expect(await auditCount('units.record_exported', 'pdf')).toBe(before + 1);
    const { rows } = await t.database.pool.query(
      `select actor_name, subject_type, after->>'sha256' as sha from audit_log
        where action = 'units.record_exported' order by id desc limit 1`,
    );
    expect(rows[0]).toEqual({ actor_name: 'Quinn Abernethy', subject_type: 'unit', sha: sha256(pdf) });
  });

  it('gives a ZIP of the record PDF and every measurement exactly as posted, whose manifest sums check out, and audits it', async () => {
    const before = await auditCount('units.record_exported', 'zip');
    const res = await as(engineer).get(`/api/units/${SERIAL}/record.zip`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/zip');
    expect(res.headers['content-disposition']).toContain(`${SERIAL}-record.zip`);
    const files = unzipSync(new Uint8Array(res.body as Buffer));
    const folder = `${SERIAL}-record/`;
    const sums = strFromU8(files[folder + MANIFEST_NAME])
      .trim()
      .split('\n')
      .map((l) => /^([0-9a-f]{64}) {2}(.+)$/.exec(l)!);
    // One sum per file: the PDF and the two measurements; each checks out against the file in the archive.
    expect(sums).toHaveLength(3);
    for (const [, hash, path] of sums) expect(sha256(files[folder + path])).toBe(hash);
    const manifest = JSON.parse(strFromU8(files[folder + 'manifest.json']));
    expect(manifest.measurements.map((m: { measurementId: string }) => m.measurementId)).toEqual(measured);
    const { rows } = await t.database.pool.query(
      'select measurement_id, payload_raw, payload_sha256 from measurements where measurement_id = any($1)',
      [measured],
    );
    for (const m of manifest.measurements) {
      const stored = rows.find((r) => r.measurement_id === m.measurementId)!;
      // Byte for byte what the station posted, and the intake's stored hash beside it.
      expect(strFromU8(files[folder + m.file])).toBe(stored.payload_raw);
      expect(m.storedSha256).toBe(stored.payload_sha256);
    }
    expect(await pdfText(Buffer.from(files[folder + manifest.record.file]))).toContain(
      'Unit calibration record',
    );
    expect(await auditCount('units.record_exported', 'zip')).toBe(before + 1);
    const audit = await t.database.pool.query(
      `select actor_name, after->>'sha256' as sha from audit_log where action = 'units.record_exported' order by id desc limit 1`,
    );
    expect(audit.rows[0]).toEqual({ actor_name: 'Evan Thorsby', sha: sha256(res.body as Buffer) });

    // The exports themselves appear on the record.
    const record = (await as(quality).get(`/api/units/${SERIAL}/record`)).body as UnitRecord;
    expect(record.timeline.filter((e) => e.title.startsWith('Record exported')).map((e) => e.title)).toEqual([
      'Record exported (PDF)',
      'Record exported (PDF and raw files, ZIP)',
    ]);
  });
});

describe('who may read and export a record (role × route)', () => {
  const routes = ['record', 'record.pdf', 'record.zip'];
  it.each(routes)(
    'quality, engineers and admins may use /api/units/:serial/%s; operators and strangers may not',
    async (r) => {
      const url = `/api/units/${SERIAL}/${r}`;
      for (const cookie of [quality, engineer, admin])
        expect((await as(cookie).get(url).buffer(true).parse(binary)).status).toBe(200);
      expect((await as(operator).get(url)).status).toBe(403);
      expect((await request(t.app).get(url)).status).toBe(401);
    },
  );
});
