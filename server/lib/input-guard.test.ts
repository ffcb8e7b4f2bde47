import { gzipSync, brotliCompressSync } from 'node:zlib';
import fc from 'fast-check';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { buildRoutes } from '../routes';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let engineer: string;

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-GUARD', polePairs: 4 });
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
});
afterAll(async () => {
  await t?.close();
});

const postRaw = (body: Buffer | string, headers: Record<string, string>) => {
  const r = request(t.app).post('/api/station/measurements').set('X-Station-Key', line.key);
  for (const [k, v] of Object.entries(headers)) r.set(k, v);
  // Sent as the bytes given (superagent would otherwise serialise a Buffer as JSON).
  return r.serialize((b: unknown) => b as string).send(body);
};

describe('text no request can carry', () => {
  it('answers 400 for NUL bytes, control characters and broken escapes in a path', async () => {
    for (const path of [
      '/api/units/%00',
      '/api/units/SN-%00-1/traveler.pdf',
      '/api/units/%ED%A0%80',
      '/api/units/%E0%A4%A',
      '/api/units/SN%0A1',
    ]) {
      const res = await request(t.app).get(path).set('Cookie', engineer);
      expect(res.status, path).toBe(400);
      expect(res.body.error.message, path).not.toMatch(/Something went wrong/);
    }
    const station = await request(t.app)
      .get('/api/station/measurements/%00/result')
      .set('X-Station-Key', line.key);
    expect(station.status).toBe(400);
  });

  it('answers 400 for a NUL byte or a lone surrogate in a query or a JSON body string', async () => {
    const q = await request(t.app)
      .get('/api/station/measurements/abc/result?waitMs=1%00')
      .set('X-Station-Key', line.key);
    expect(q.status).toBe(400);
    const m = simulatedMeasurement(line.recipe.body, 'SN-GUARD-1');
    for (const bad of ['\\u0000', '\\ud800', 'x\\udfffy']) {
      const text = JSON.stringify({
        ...m,
        segments: m.segments.map((s) => ({ ...s, label: 'LABEL' })),
      }).replace('"LABEL"', `"${bad}"`);
      const res = await postRaw(text, { 'Content-Type': 'application/json' });
      expect(res.status, bad).toBe(400);
      expect(res.body.error.code, bad).toBe('request.bad_characters');
    }
    const key = JSON.stringify(m).replace('"serial"', '"\\u0000serial"');
    expect((await postRaw(key, { 'Content-Type': 'application/json' })).status).toBe(400);
    // A lone surrogate as a character, not an escape: only a UTF-16 body can carry one.
    const utf16 = Buffer.from(
      JSON.stringify({ ...m, segments: m.segments.map((s) => ({ ...s, label: 'a\ud800b' })) }),
      'utf16le',
    );
    const wide = await postRaw(utf16, { 'Content-Type': 'application/json; charset=utf-16le' });
    expect(wide.status).toBe(400);
    expect(wide.body.error.code).toBe('request.bad_characters');
  });

  it('never answers 500 to any path parameter or query text of any GET route (fuzzed, NUL and control characters included)', async () => {
    const admin = await sessionCookie(t.app, 'ada.admin', 'demo-admin-pass');
    const routes = buildRoutes(t.deps).filter((r) => r.method === 'get' && !r.path.endsWith('/events'));
    const text = fc.oneof(
      fc.string({ unit: 'binary', maxLength: 30 }),
      fc.string({
        unit: fc.constantFrom(
          '\u0000',
          '\u0001',
          '\u001f',
          '\u007f',
          '\ud800',
          '\udc00',
          '%',
          'ß',
          'a',
          '1',
          '/',
          '.',
          '-',
        ),
        maxLength: 20,
      }),
      fc.uuid(),
    );
    // encodeURIComponent cannot encode a lone surrogate: send the bytes a broken client would.
    const enc = (s: string) =>
      s.replace(/[\s\S]/g, (ch) => {
        try {
          return encodeURIComponent(ch);
        } catch {
          return '%ED%A0%80';
        }
      });
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom(...routes),
        text,
        text,
        fc.boolean(),
        async (r, param, query, asAdmin) => {
          const path = `${r.path.replace(/:[A-Za-z]+/g, () => enc(param))}?waitMs=0&q=${enc(query)}&search=${enc(query)}`;
          const res = await request(t.app)
            .get(path)
            .set('Cookie', asAdmin ? admin : engineer)
            .set('X-Station-Key', line.key);
          expect(res.status, `${r.path} → ${path}`).toBeLessThan(500);
        },
      ),
      { numRuns: 150 },
    );
  });
});

describe('bodies the server cannot read', () => {
  const body = () => JSON.stringify(simulatedMeasurement(line.recipe.body, 'SN-GUARD-2'));

  it('answers 415 for an unsupported charset and an unknown Content-Encoding', async () => {
    const charset = await postRaw(body(), { 'Content-Type': 'application/json; charset=latin-9' });
    expect(charset.status).toBe(415);
    expect(charset.body.error.message).toMatch(/send UTF-8/);
    const encoding = await postRaw(body(), {
      'Content-Type': 'application/json',
      'Content-Encoding': 'x-squash',
    });
    expect(encoding.status).toBe(415);
    expect(encoding.body.error.code).toBe('request.unsupported_encoding');
  });

  it('answers 400 for a corrupt gzip or brotli body, and reads a good one', async () => {
    const good = gzipSync(body());
    const corrupt = Buffer.from(good);
    corrupt.fill(0x55, 10, 60);
    const gz = await postRaw(corrupt, { 'Content-Type': 'application/json', 'Content-Encoding': 'gzip' });
    expect(gz.status).toBe(400);
    const br = brotliCompressSync(body());
    const br2 = await postRaw(br.subarray(0, br.length >> 1), {
      'Content-Type': 'application/json',
      'Content-Encoding': 'br',
    });
    expect(br2.status).toBe(400);
    const ok = await postRaw(good, { 'Content-Type': 'application/json', 'Content-Encoding': 'gzip' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(202);
  });
});

describe('validation answers', () => {
  it('flag a 240-character station name as too long in plain words, never in library wording', async () => {
    const admin = await sessionCookie(t.app, 'ada.admin', 'demo-admin-pass');
    const res = await request(t.app)
      .post('/api/admin/stations')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', admin)
      .send({ name: 'S'.repeat(240), line: 'Line 1', allowedModelIds: [line.model.id] });
    expect(res.status).toBe(400);
    expect(res.body.error.issues).toEqual([
      { path: 'name', message: 'Too long: at most 40 characters (this has 240).' },
    ]);
    expect(res.body.error.message).toBe(
      'The request is not valid: name: Too long: at most 40 characters (this has 240).',
    );
  });
});
