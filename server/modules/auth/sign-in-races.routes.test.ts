import bcrypt from 'bcryptjs';
import jwt from 'jsonwebtoken';
import request from 'supertest';
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { createApp } from '#server/app';
import { TEST_ORIGIN, createTestApp, type TestApp } from '#tests/harness/test-app';
import { LOCKOUT_MINUTES, LOCKOUT_THRESHOLD } from './auth.service';
import { IP_FAILURE_LIMIT } from './auth.routes';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t?.close();
});
afterEach(() => {
  vi.restoreAllMocks();
  t.setNow(new Date());
});

const signIn = (app: TestApp['app'], username: string, password: string, ip: string, cookie?: string) => {
  const r = request(app).post('/api/auth/sign-in').set('X-Forwarded-For', ip).set('Origin', TEST_ORIGIN);
  if (cookie) r.set('Cookie', cookie);
  return r.send({ username, password });
};

function cookiesOf(res: request.Response): string {
  const set = (res.headers['set-cookie'] as unknown as string[]) ?? [];
  return set.map((c) => c.split(';')[0]).join('; ');
}

async function userId(username: string): Promise<string> {
  const { rows } = await t.database.pool.query('select id from users where username = $1', [username]);
  return rows[0].id;
}

/** Secrets actually compared with the account's own hash: one `auth.sign_in_failed` each. */
async function checkedFailures(id: string): Promise<number> {
  const { rows } = await t.database.pool.query(
    `select count(*)::int as n from audit_log where action = 'auth.sign_in_failed' and subject_id = $1`,
    [id],
  );
  return rows[0].n;
}

async function unlock(username: string) {
  await t.database.pool.query(
    'update users set failed_attempts = 0, locked_until = null where username = $1',
    [username],
  );
}

describe('parallel sign-in attempts', () => {
  it(`checks at most ${LOCKOUT_THRESHOLD} of 30 parallel wrong passwords for one account (30 addresses)`, async () => {
    const id = await userId('evan.engineer');
    const answers = await Promise.all(
      Array.from({ length: 30 }, (_, i) =>
        signIn(t.app, 'evan.engineer', `wrong-${i}-pass`, `10.30.0.${i + 1}`),
      ),
    );
    expect(answers.map((a) => a.status)).toEqual(Array(30).fill(401));
    const checked = await checkedFailures(id);
    expect(checked).toBe(LOCKOUT_THRESHOLD);
    const { rows } = await t.database.pool.query(
      'select failed_attempts, locked_until from users where id = $1',
      [id],
    );
    expect(rows[0].failed_attempts).toBe(LOCKOUT_THRESHOLD);
    expect(rows[0].locked_until).not.toBeNull();
    await unlock('evan.engineer');
  }, 90_000);

  it(`lets at most ${IP_FAILURE_LIMIT} of 30 parallel attempts from one address through to a check`, async () => {
    const answers = await Promise.all(
      Array.from({ length: 30 }, (_, i) => signIn(t.app, `ghost.${i}`, 'wrong-password', '10.31.0.1')),
    );
    const statuses = answers.map((a) => a.status);
    expect(statuses.filter((s) => s === 401)).toHaveLength(IP_FAILURE_LIMIT);
    expect(statuses.filter((s) => s === 429)).toHaveLength(30 - IP_FAILURE_LIMIT);
  }, 90_000);
});

describe('what a refusal reveals', () => {
  it('answers an unknown name, a wrong password and a locked account with the same status, body and one bcrypt comparison', async () => {
    const compare = vi.spyOn(bcrypt, 'compare');
    const unknown = await signIn(t.app, 'nobody.at.all', 'some-password', '10.32.0.1');
    expect(compare).toHaveBeenCalledTimes(1);
    const wrong = await signIn(t.app, 'quinn.quality', 'wrong-password', '10.32.0.2');
    expect(compare).toHaveBeenCalledTimes(2);
    for (let i = 1; i < LOCKOUT_THRESHOLD; i++)
      await signIn(t.app, 'quinn.quality', 'wrong-password', '10.32.0.3');
    compare.mockClear();
    const locked = await signIn(t.app, 'quinn.quality', 'demo-quality-pass', '10.32.0.4');
    expect(compare).toHaveBeenCalledTimes(1);
    for (const res of [unknown, wrong, locked]) {
      expect(res.status).toBe(401);
      expect(res.body).toEqual(unknown.body);
    }
    await unlock('quinn.quality');
  });
});

describe('after a lock', () => {
  it('does not lock again on one wrong try after the lock has expired', async () => {
    for (let i = 0; i < LOCKOUT_THRESHOLD; i++)
      await signIn(t.app, 'olga.operator', 'wrong-password', '10.33.0.1');
    t.setNow(new Date(Date.now() + (LOCKOUT_MINUTES + 1) * 60_000));
    expect((await signIn(t.app, 'olga.operator', 'wrong-again', '10.33.0.2')).status).toBe(401);
    const { rows } = await t.database.pool.query(
      `select failed_attempts, locked_until from users where username = 'olga.operator'`,
    );
    expect(rows[0]).toEqual({ failed_attempts: 1, locked_until: null });
    expect((await signIn(t.app, 'olga.operator', 'demo-operator-pass', '10.33.0.3')).status).toBe(200);
  });

  it('still opens the account on a browser its owner signed in from, while guessers elsewhere stay locked out', async () => {
    const own = await signIn(t.app, 'ada.admin', 'demo-admin-pass', '10.34.0.1');
    expect(own.status).toBe(200);
    const device = cookiesOf(own)
      .split('; ')
      .find((c) => c.startsWith('pw_device='))!;
    expect(device).toBeDefined();
    // Someone locks every administrator by guessing from elsewhere.
    for (let i = 0; i < LOCKOUT_THRESHOLD + 2; i++)
      await signIn(t.app, 'ada.admin', `guess-${i}`, '10.34.9.9');
    expect((await signIn(t.app, 'ada.admin', 'demo-admin-pass', '10.34.0.2')).status).toBe(401);
    expect((await signIn(t.app, 'ada.admin', 'demo-admin-pass', '10.34.0.1', device)).status).toBe(200);
    // The lock still holds for everybody else.
    expect((await signIn(t.app, 'ada.admin', 'demo-admin-pass', '10.34.0.3')).status).toBe(401);
    // The trusted browser has its own allowance of failures; after it, the account lock applies to it too.
    for (let i = 0; i < LOCKOUT_THRESHOLD; i++)
      await signIn(t.app, 'ada.admin', `typo-${i}`, '10.34.0.1', device);
    expect((await signIn(t.app, 'ada.admin', 'demo-admin-pass', '10.34.0.1', device)).status).toBe(401);
    await unlock('ada.admin');
  }, 60_000);
});

describe('client addresses', () => {
  it('ignores X-Forwarded-For unless TRUST_PROXY names the proxy', async () => {
    const direct = createApp({ ...t.deps, env: { ...t.deps.env, TRUST_PROXY: false } });
    for (let i = 0; i < IP_FAILURE_LIMIT; i++) {
      expect((await signIn(direct, `spoof.${i}`, 'wrong-password', `10.35.${i}.1`)).status).toBe(401);
    }
    // Every attempt came from the same connection address, whatever the header claimed.
    expect((await signIn(direct, 'spoof.last', 'wrong-password', '10.35.99.1')).status).toBe(429);
  }, 60_000);
});

describe('session tokens', () => {
  it('stops a copied session cookie from working once its owner signs out', async () => {
    const res = await signIn(t.app, 'evan.engineer', 'demo-engineer-pass', '10.36.0.1');
    const copy = cookiesOf(res);
    expect((await request(t.app).get('/api/me').set('Cookie', copy)).status).toBe(200);
    const out = await request(t.app)
      .post('/api/auth/sign-out')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', copy);
    expect(out.status).toBe(204);
    const again = await request(t.app).get('/api/me').set('Cookie', copy);
    expect(again.status).toBe(401);
  });

  it('refuses a token without an expiry and one whose subject is not a user id, with 401 and never 500', async () => {
    const secret = t.deps.env.SESSION_SECRET;
    const id = await userId('evan.engineer');
    const { rows } = await t.database.pool.query('select token_version from users where id = $1', [id]);
    const noExp = jwt.sign({ sub: id, tv: rows[0].token_version }, secret, { algorithm: 'HS256' });
    const notUuid = jwt.sign(
      { sub: "x'; select 1 --", tv: 0, exp: Math.floor(Date.now() / 1000) + 600 },
      secret,
      {
        algorithm: 'HS256',
      },
    );
    for (const token of [noExp, notUuid]) {
      const me = await request(t.app).get('/api/me').set('Cookie', `pw_session=${token}`);
      expect(me.status).toBe(401);
    }
  });
});
