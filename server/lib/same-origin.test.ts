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
  line = await createLineFixture(t.deps.db, { code: 'TM-CSRF', polePairs: 4 });
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
});
afterAll(async () => {
  await t?.close();
});

const foreign = [
  'http://evil.example',
  'http://neighbour.phasewright.test',
  'null-ish://',
  'http://phasewright.test.evil.example',
];

async function unitCount(serial: string): Promise<number> {
  const { rows } = await t.database.pool.query('select count(*)::int as n from units where serial = $1', [
    serial,
  ]);
  return rows[0].n;
}

describe('cross-site request forgery', () => {
  it('refuses a JSON request with a session cookie from a foreign or same-site neighbour origin', async () => {
    for (const origin of foreign) {
      const res = await request(t.app)
        .post('/api/units')
        .set('Origin', origin)
        .set('Cookie', engineer)
        .send({ serial: 'SN-CSRF-1', modelId: line.model.id });
      expect(res.status, origin).toBe(403);
      expect(res.body.error.code).toBe('request.cross_site');
    }
    expect(await unitCount('SN-CSRF-1')).toBe(0);
  });

  it('refuses a cookie request without Origin unless the browser marks it same-origin', async () => {
    const bare = await request(t.app)
      .post('/api/units')
      .set('Cookie', engineer)
      .send({ serial: 'SN-CSRF-2', modelId: line.model.id });
    expect(bare.status).toBe(403);
    const sameOrigin = await request(t.app)
      .post('/api/units')
      .set('Sec-Fetch-Site', 'same-origin')
      .set('Cookie', engineer)
      .send({ serial: 'SN-CSRF-2', modelId: line.model.id });
    expect(sameOrigin.status).toBe(201);
    const own = await request(t.app)
      .post('/api/units')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .send({ serial: 'SN-CSRF-3', modelId: line.model.id });
    expect(own.status).toBe(201);
  });

  it('covers multipart uploads and body-less requests too', async () => {
    const upload = await request(t.app)
      .post('/api/units/import')
      .set('Origin', 'http://evil.example')
      .set('Cookie', engineer)
      .attach('file', Buffer.from('serial,model\nSN-CSRF-4,TM-CSRF\n'), 'work-order.csv');
    expect(upload.status).toBe(403);
    expect(await unitCount('SN-CSRF-4')).toBe(0);
    const signOut = await request(t.app)
      .post('/api/auth/sign-out')
      .set('Origin', 'http://evil.example')
      .set('Cookie', engineer);
    expect(signOut.status).toBe(403);
    expect((await request(t.app).get('/api/me').set('Cookie', engineer)).status).toBe(200);
  });

  it('refuses a sign-in posted from a foreign page', async () => {
    const res = await request(t.app)
      .post('/api/auth/sign-in')
      .set('Origin', 'http://evil.example')
      .send({ username: 'evan.engineer', password: 'demo-engineer-pass' });
    expect(res.status).toBe(403);
  });

  it('lets stations post with their key, which no foreign page can send', async () => {
    const res = await request(t.app)
      .post('/api/station/measurements')
      .set('X-Station-Key', line.key)
      .send(simulatedMeasurement(line.recipe.body, 'SN-CSRF-STATION'));
    expect(res.status).toBe(202);
  });
});
