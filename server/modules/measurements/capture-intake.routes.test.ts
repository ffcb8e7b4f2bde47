import v8 from 'node:v8';
import vm from 'node:vm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { CSV_LIMITS } from '#shared/capture/csv';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-CAP', polePairs: 4 });
});
afterAll(async () => {
  await t?.close();
});

// Lets the test collect garbage before measuring, so the growth seen is what the uploads allocated.
v8.setFlagsFromString('--expose-gc');
const gc = vm.runInNewContext('gc') as () => void;

/** Heap plus typed-array memory, in MB. */
function memoryMb(): number {
  const m = process.memoryUsage();
  return (m.heapUsed + m.arrayBuffers) / 2 ** 20;
}

const upload = (id: string, csv: Buffer) =>
  request(t.app)
    .post('/api/station/captures')
    .set('X-Station-Key', line.key)
    .field('measurementId', id)
    .field('serial', 'SN-HOSTILE')
    .attach('capture', csv, 'capture.csv');

const header = 'time_s,va,vb,vc,ha,hb,hc\n';
const hostile: [string, () => Buffer, RegExp][] = [
  ['one line of 100,000 empty fields', () => Buffer.from(','.repeat(99_999)), /100000 columns/],
  [
    'a header of 50,000 names',
    () => Buffer.from(Array.from({ length: 50_000 }, (_, i) => `c${i}`).join(',')),
    /columns/,
  ],
  ['one 1 MB line without separators', () => Buffer.alloc(1 << 20, 0x31), /bytes long/],
  [
    'a data row of 100,000 fields under a normal header',
    () => Buffer.from(header + '0,1,2,3,1,0,1\n' + '0,'.repeat(100_000) + '\n'),
    /more than 7 fields/,
  ],
  [
    '200,000 rows that are not numbers',
    () => Buffer.from(header + 'x,x,x,x,x,x,x\n'.repeat(200_000)),
    /not a finite number/,
  ],
  ['three million tiny rows', () => Buffer.from('0\n'.repeat(3_000_000)), /at most 2000000 rows/],
  [
    'a NUL byte in a number',
    () => Buffer.from(header + '0,1,2,3,1,0,1\n0\u0000,1,2,3,1,0,1\n'),
    /not a finite number|unexpected character/,
  ],
];

describe('hostile capture uploads', () => {
  it('answers each hostile shape with a clear 400 and a small error, stores nothing and keeps memory within budget', async () => {
    const growths: number[] = [];
    for (const [i, [what, make, message]] of hostile.entries()) {
      const body = make();
      gc();
      const before = memoryMb();
      const started = performance.now();
      const res = await upload(`hostile-${i}`, body);
      const ms = performance.now() - started;
      const growth = memoryMb() - before;
      growths.push(growth);
      expect(res.status, what).toBe(400);
      expect(res.body.error.code, what).toBe('measurements.unusable');
      expect(res.body.error.message, what).toMatch(message);
      // At most CSV_LIMITS.maxIssues problems listed plus one line that counts the rest.
      expect(res.body.error.issues.length, what).toBeLessThanOrEqual(CSV_LIMITS.maxIssues + 1);
      expect(res.text.length, what).toBeLessThan(4096);
      // Memory budget (README, "The station line"): the upload itself (≤ 32 MB, held by multer) plus
      // the sample columns (≤ 80 MB) for a legal shape; a refused shape allocates no columns at all.
      expect(growth, what).toBeLessThan(3 * (body.length / 2 ** 20) + 16);
      expect(ms, what).toBeLessThan(5_000);
    }
    const { rows } = await t.database.pool.query(
      `select count(*)::int as n from measurements where measurement_id like 'hostile-%'`,
    );
    expect(rows[0].n).toBe(0);
  });

  it('says how many problems it did not list', async () => {
    const res = await upload('hostile-many', Buffer.from(header + 'x,x,x,x,x,x,x\n'.repeat(500)));
    expect(res.status).toBe(400);
    const issues = res.body.error.issues as { path: string; message: string }[];
    expect(issues).toHaveLength(CSV_LIMITS.maxIssues + 1);
    expect(issues.at(-1)!.message).toBe(
      `and ${500 - CSV_LIMITS.maxIssues} more problems of the same kinds, not listed`,
    );
  });
});

describe('hostile JSON measurements', () => {
  it('refuses a body of 100,000 empty segments before reading them, with one small 400', async () => {
    const body = JSON.stringify({
      measurementId: 'hostile-json-1',
      serial: 'SN-HOSTILE',
      segments: Array.from({ length: 100_000 }, () => ({})),
    });
    gc();
    const before = memoryMb();
    const res = await request(t.app)
      .post('/api/station/measurements')
      .set('X-Station-Key', line.key)
      .set('Content-Type', 'application/json')
      .send(body);
    const growth = memoryMb() - before;
    expect(res.status).toBe(400);
    expect(res.body.error.issues).toEqual([
      { path: 'segments', message: 'has 100000 segments; at most 16 are accepted' },
    ]);
    expect(res.text.length).toBeLessThan(4096);
    expect(growth).toBeLessThan(32);
  });

  it('answers 20,000 empty hall edges with a small 400 that counts what it does not list', async () => {
    const body = JSON.stringify({
      measurementId: 'hostile-json-2',
      serial: 'SN-HOSTILE',
      segments: [
        { direction: 'forward', hallEdges: Array.from({ length: 20_000 }, () => ({})), bemfCrossings: [] },
      ],
    });
    const res = await request(t.app)
      .post('/api/station/measurements')
      .set('X-Station-Key', line.key)
      .set('Content-Type', 'application/json')
      .send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.issues).toHaveLength(21);
    expect(res.body.error.issues.at(-1).message).toMatch(/^and \d+ more problems, not listed$/);
    expect(res.text.length).toBeLessThan(4096);
  });
});
