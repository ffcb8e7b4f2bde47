import fc from 'fast-check';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let engineer: string;

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-SER', polePairs: 4 });
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
});
afterAll(async () => {
  await t?.close();
});

const post = (body: unknown) =>
  request(t.app)
    .post('/api/station/measurements')
    .set('X-Station-Key', line.key)
    .send(body as object);

async function unitsNamed(serial: string): Promise<number> {
  const { rows } = await t.database.pool.query(
    'select count(*)::int as n from units where upper(serial) = upper($1)',
    [serial],
  );
  return rows[0].n;
}

describe('the serial rule at the station', () => {
  it('refuses ß, ﬀ and ŉ serials with the same clear 400 on every post, never a 500', async () => {
    for (const serial of ['SN-ß-1', 'SN-ﬀ-2', 'ŉSN-3']) {
      for (let post_ = 0; post_ < 2; post_++) {
        const res = await post(simulatedMeasurement(line.recipe.body, serial));
        expect(res.status, serial).toBe(400);
        expect(res.body.error.code).toBe('request.invalid');
        expect(res.body.error.issues[0]).toMatchObject({ path: 'serial' });
        expect(res.body.error.issues[0].message).toMatch(/The serial contains “/);
      }
    }
    const { rows } = await t.database.pool.query(
      `select count(*)::int as n from units where serial ~ '[^ -~]'`,
    );
    expect(rows[0].n).toBe(0);
  });

  it('refuses white-space-only and control-character serials instead of merging them into one unit', async () => {
    for (const serial of ['   ', '\t', '\u0000\u0000\u0000', 'SN\u0001001', '\r\n']) {
      const res = await post(simulatedMeasurement(line.recipe.body, serial));
      expect(res.status, JSON.stringify(serial)).toBe(400);
      expect(res.body.error.message).toMatch(/serial|NUL byte/);
    }
    const { rows } = await t.database.pool.query(
      `select count(*)::int as n from units where trim(serial) = ''`,
    );
    expect(rows[0].n).toBe(0);
  });

  it('reads a serial in any letter case and with a scanner’s line end as one unit', async () => {
    expect((await post(simulatedMeasurement(line.recipe.body, 'sn-case-1\r\n'))).status).toBe(202);
    const second = await post(simulatedMeasurement(line.recipe.body, ' SN-Case-1 '));
    expect(second.status).toBe(202);
    expect(second.body.serial).toBe('SN-CASE-1');
    expect(await unitsNamed('SN-CASE-1')).toBe(1);
  });

  it('never answers 500 to any serial text (fuzzed over the station API)', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.string({ unit: 'binary', minLength: 0, maxLength: 50 }),
          fc.string({
            unit: fc.constantFrom('\u0000', '\u001f', ' ', 'ß', 'ﬀ', 'ŉ', 'İ', 'a', 'Q', '9', '/', '.'),
            maxLength: 44,
          }),
        ),
        async (serial) => {
          const res = await post(simulatedMeasurement(line.recipe.body, serial));
          expect([202, 400]).toContain(res.status);
        },
      ),
      { numRuns: 40 },
    );
  });

  it('upper-cases every valid serial the same way in JavaScript and in the database (fuzzed)', async () => {
    const serials = fc.sample(
      fc
        .array(
          fc.constantFrom(...'abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789._/-'.split('')),
          {
            minLength: 3,
            maxLength: 40,
          },
        )
        .map((cs) => `a${cs.join('')}`.slice(0, 40)),
      500,
    );
    const { rows } = await t.database.pool.query('select upper(s) as u from unnest($1::text[]) s', [serials]);
    expect(rows.map((r: { u: string }) => r.u)).toEqual(serials.map((s) => s.toUpperCase()));
  });
});

describe('plausible timings at the station', () => {
  it('refuses negative, absurd and beyond-capture times with 400 before computing anything', async () => {
    for (const [us, message] of [
      [-5, /must not be negative/],
      [1e300, /at most 60 s/],
      [61_000_000, /at most 60 s/],
    ] as const) {
      const m = simulatedMeasurement(line.recipe.body, 'SN-TIMING-1');
      const edges = m.segments[0].hallEdges;
      if (us < 0) edges[0].us = us;
      else edges[edges.length - 1].us = us;
      const res = await post(m);
      expect(res.status, String(us)).toBe(400);
      expect(res.body.error.issues[0].path).toMatch(/^segments\.0\.hallEdges\.\d+\.us$/);
      expect(res.body.error.issues[0].message).toMatch(message);
    }
    const { rows } = await t.database.pool.query(
      `select count(*)::int as n from measurements where serial = 'SN-TIMING-1'`,
    );
    expect(rows[0].n).toBe(0);
  });
});

describe('the serial rule on unit pages and the import', () => {
  it('answers 400 in plain words for a serial path with a NUL byte or other bad characters', async () => {
    for (const path of [
      '/api/units/%00',
      '/api/units/SN%00X',
      '/api/units/%C3%9F%C3%9F%C3%9F',
      '/api/units/%01%02%03/traveler.pdf',
    ]) {
      const res = await request(t.app).get(path).set('Origin', TEST_ORIGIN).set('Cookie', engineer);
      expect(res.status, path).toBe(400);
      expect(res.body.error.message, path).toMatch(/serial|character|NUL byte/i);
    }
  });

  it('finds a unit by any letter case of its serial', async () => {
    await post(simulatedMeasurement(line.recipe.body, 'SN-PAGE-1'));
    const res = await request(t.app)
      .get('/api/units/sn-page-1')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer);
    expect(res.status).toBe(200);
    expect(res.body.unit.serial).toBe('SN-PAGE-1');
  });

  it('refuses a work-order row whose serial the product cannot carry', async () => {
    const res = await request(t.app)
      .post('/api/units/import')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .attach(
        'file',
        Buffer.from('serial,model\nWO-ß-1,TM-SER\n   ,TM-SER\nwo-ok-1,TM-SER\n'),
        'work-order.csv',
      );
    expect(res.status).toBe(422);
    expect(res.body.errors.map((e: { row: number; message: string }) => e.row)).toEqual([2, 3]);
    expect(res.body.errors[0].message).toMatch(/“ß”/);
  });
});
