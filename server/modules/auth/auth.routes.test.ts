import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sql } from 'drizzle-orm';
import { TEST_ORIGIN, createTestApp, type TestApp } from '#tests/harness/test-app';
import { LOCKOUT_THRESHOLD } from './auth.service';
import { IP_FAILURE_LIMIT } from './auth.routes';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t?.close();
});

async function signIn(username: string, password: string, ip = '10.9.0.1') {
  return request(t.app).post('/api/auth/sign-in').set('X-Forwarded-For', ip).send({ username, password });
}

function cookieOf(res: request.Response): string {
  const set = res.headers['set-cookie'] as unknown as string[];
  return set.map((c) => c.split(';')[0]).join('; ');
}

async function auditActions(subjectId?: string): Promise<string[]> {
  const rows = await t.database.pool.query<{ action: string }>(
    subjectId
      ? 'select action from audit_log where subject_id = $1 order by id'
      : 'select action from audit_log order by id',
    subjectId ? [subjectId] : [],
  );
  return rows.rows.map((r) => r.action);
}

describe('signing in with a password', () => {
  it('gives a session cookie that is httpOnly, SameSite=Strict and lasts one shift', async () => {
    const res = await signIn('evan.engineer', 'demo-engineer-pass');
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ username: 'evan.engineer', role: 'engineer' });
    const cookie = (res.headers['set-cookie'] as unknown as string[])[0];
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Strict/);
    expect(cookie).toMatch(/Max-Age=43200/);
    const me = await request(t.app).get('/api/me').set('Origin', TEST_ORIGIN).set('Cookie', cookieOf(res));
    expect(me.status).toBe(200);
    expect(me.body.user.username).toBe('evan.engineer');
  });

  it('refuses a wrong password with 401 and audits the failure', async () => {
    const res = await signIn('quinn.quality', 'not-the-password');
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('auth.bad_credentials');
    const [{ id }] = (
      await t.database.pool.query('select id from users where username = $1', ['quinn.quality'])
    ).rows;
    expect(await auditActions(id)).toContain('auth.sign_in_failed');
  });

  it('answers an unknown user name exactly like a wrong password', async () => {
    const res = await signIn('nobody.here', 'whatever-password');
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('auth.bad_credentials');
  });

  it('refuses a disabled account with 403 once the password is right', async () => {
    await t.database.pool.query(`update users set disabled = true where username = 'tomas.operator'`);
    const wrong = await signIn('tomas.operator', 'bad-password-x');
    expect(wrong.status).toBe(401);
    const right = await signIn('tomas.operator', 'demo-operator2-pass');
    expect(right.status).toBe(403);
    expect(right.body.error.code).toBe('auth.account_disabled');
    await t.database.pool.query(`update users set disabled = false where username = 'tomas.operator'`);
  });

  it(`locks the account after ${LOCKOUT_THRESHOLD} failures in a row, even against the right password`, async () => {
    for (let i = 1; i < LOCKOUT_THRESHOLD; i++)
      expect((await signIn('ada.admin', `wrong-${i}-password`, '10.9.1.1')).status).toBe(401);
    const locking = await signIn('ada.admin', 'wrong-last-password', '10.9.1.1');
    expect(locking.status).toBe(401);
    // A locked account answers exactly like a wrong password (a refusal reveals nothing).
    const right = await signIn('ada.admin', 'demo-admin-pass', '10.9.1.2');
    expect(right.status).toBe(401);
    expect(right.body).toEqual(locking.body);
    const [{ id }] = (await t.database.pool.query('select id from users where username = $1', ['ada.admin']))
      .rows;
    expect(await auditActions(id)).toEqual(
      expect.arrayContaining(['auth.account_locked', 'auth.sign_in_refused_locked']),
    );
    // The lock ends by itself after its time.
    t.setNow(new Date(Date.now() + 16 * 60_000));
    expect((await signIn('ada.admin', 'demo-admin-pass', '10.9.1.3')).status).toBe(200);
    t.setNow(new Date());
  });

  it(`throttles an address after ${IP_FAILURE_LIMIT} failures with 429, whatever the account`, async () => {
    for (let i = 0; i < IP_FAILURE_LIMIT; i++) {
      expect((await signIn(`ghost${i}`, 'wrong-password', '10.9.2.1')).status).toBe(401);
    }
    const blocked = await signIn('evan.engineer', 'demo-engineer-pass', '10.9.2.1');
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe('auth.rate_limited');
    expect(await auditActions()).toContain('auth.rate_limited');
    expect((await signIn('evan.engineer', 'demo-engineer-pass', '10.9.2.2')).status).toBe(200);
  });

  it('rejects a malformed body with 400 and the field paths', async () => {
    const res = await request(t.app).post('/api/auth/sign-in').send({ username: '' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('request.invalid');
    expect(res.body.error.issues.map((i: { path: string }) => i.path)).toEqual(
      expect.arrayContaining(['username', 'password']),
    );
    const bad = await request(t.app)
      .post('/api/auth/sign-in')
      .set('Content-Type', 'application/json')
      .send('{"username":');
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('request.malformed_json');
  });
});

describe('signing in with badge and PIN', () => {
  it('signs an operator in with the badge code (any letter case) and PIN', async () => {
    const res = await request(t.app)
      .post('/api/auth/badge-sign-in')
      .send({ badgeCode: 'op-1001', pin: '2468' });
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ username: 'olga.operator', role: 'operator' });
  });

  it('refuses a wrong PIN', async () => {
    const res = await request(t.app)
      .post('/api/auth/badge-sign-in')
      .send({ badgeCode: 'OP-1001', pin: '0000' });
    expect(res.status).toBe(401);
    expect(res.body.error.message).toMatch(/Badge or PIN/);
  });
});

describe('sessions', () => {
  it('ends after 12 hours with a clear 401', async () => {
    const res = await signIn('evan.engineer', 'demo-engineer-pass', '10.9.3.1');
    t.setNow(new Date(Date.now() + 12 * 3_600_000 + 60_000));
    const me = await request(t.app).get('/api/me').set('Origin', TEST_ORIGIN).set('Cookie', cookieOf(res));
    t.setNow(new Date());
    expect(me.status).toBe(401);
    expect(me.body.error.code).toBe('auth.session_expired');
  });

  it('is revoked at once when an admin changes the role', async () => {
    const admin = await signIn('ada.admin', 'demo-admin-pass', '10.9.3.2');
    const q = await signIn('quinn.quality', 'demo-quality-pass', '10.9.3.3');
    const [{ id }] = (
      await t.database.pool.query('select id from users where username = $1', ['quinn.quality'])
    ).rows;
    const noReason = await request(t.app)
      .patch(`/api/admin/users/${id}`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', cookieOf(admin))
      .send({ role: 'engineer' });
    expect(noReason.status).toBe(400);
    expect(noReason.body.error.code).toBe('users.reason_required');
    const changed = await request(t.app)
      .patch(`/api/admin/users/${id}`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', cookieOf(admin))
      .send({ role: 'engineer', reason: 'moved to process engineering' });
    expect(changed.status).toBe(200);
    const me = await request(t.app).get('/api/me').set('Origin', TEST_ORIGIN).set('Cookie', cookieOf(q));
    expect(me.status).toBe(401);
    expect(me.body.error.code).toBe('auth.session_revoked');
    await request(t.app)
      .patch(`/api/admin/users/${id}`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', cookieOf(admin))
      .send({ role: 'quality', reason: 'back' });
  });

  it('rejects a forged token', async () => {
    const me = await request(t.app)
      .get('/api/me')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', 'pw_session=eyJhbGciOiJIUzI1NiJ9.eyJzdWIiOiJ4In0.bad');
    expect(me.status).toBe(401);
  });

  it('tells 401 (nobody) from 403 (wrong role)', async () => {
    expect((await request(t.app).get('/api/admin/users')).status).toBe(401);
    const op = await request(t.app)
      .post('/api/auth/badge-sign-in')
      .send({ badgeCode: 'OP-1001', pin: '2468' });
    const res = await request(t.app)
      .get('/api/admin/users')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', cookieOf(op));
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('auth.forbidden');
  });
});

describe('invitations and password resets by e-mail', () => {
  it('e-mails an invitation whose link sets the password once', async () => {
    const admin = await signIn('ada.admin', 'demo-admin-pass', '10.9.4.1');
    const created = await request(t.app)
      .post('/api/admin/users')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', cookieOf(admin))
      .send({
        username: 'nia.new',
        displayName: 'Nia New',
        email: 'nia@corvane.example',
        role: 'quality',
        sendInvite: true,
      });
    expect(created.status).toBe(201);
    expect(created.body.user.hasPassword).toBe(false);
    const mail = t.mail.messages().find((m) => m.to.includes('nia@corvane.example'));
    expect(mail?.subject).toMatch(/invited/);
    const token = /token=([A-Za-z0-9_-]+)/.exec(mail!.text)![1];
    const set = await request(t.app)
      .post('/api/auth/set-password')
      .send({ token, password: 'a-brand-new-pass' });
    expect(set.status).toBe(200);
    expect((await signIn('nia.new', 'a-brand-new-pass', '10.9.4.2')).status).toBe(200);
    const again = await request(t.app)
      .post('/api/auth/set-password')
      .send({ token, password: 'another-new-pass' });
    expect(again.status).toBe(400);
    expect(again.body.error.code).toBe('auth.token_invalid');
  });

  it('expires a reset link after an hour', async () => {
    const res = await request(t.app)
      .post('/api/auth/password-reset')
      .send({ email: 'evan.engineer@corvane.example' });
    expect(res.status).toBe(202);
    const mail = t.mail.messages().find((m) => m.to.includes('evan.engineer@corvane.example'));
    const token = /token=([A-Za-z0-9_-]+)/.exec(mail!.text)![1];
    t.setNow(new Date(Date.now() + 61 * 60_000));
    const late = await request(t.app)
      .post('/api/auth/set-password')
      .send({ token, password: 'too-late-password' });
    t.setNow(new Date());
    expect(late.status).toBe(400);
    expect(late.body.error.code).toBe('auth.token_expired');
  });

  it('answers 202 for an unknown address and sends nothing', async () => {
    const before = t.mail.messages().length;
    const res = await request(t.app)
      .post('/api/auth/password-reset')
      .send({ email: 'nobody@corvane.example' });
    expect(res.status).toBe(202);
    expect(t.mail.messages().length).toBe(before);
  });

  it('refuses an invalid new account and creates nothing', async () => {
    const admin = await signIn('ada.admin', 'demo-admin-pass', '10.9.4.3');
    const before = (await t.database.db.execute(sql`select count(*)::int as n from users`)).rows[0];
    const res = await request(t.app)
      .post('/api/admin/users')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', cookieOf(admin))
      .send({ username: 'Bad Name!', displayName: '', role: 'wizard', sendInvite: true });
    expect(res.status).toBe(400);
    expect(res.body.error.issues.map((i: { path: string }) => i.path)).toEqual(
      expect.arrayContaining(['username', 'displayName', 'role']),
    );
    const after = (await t.database.db.execute(sql`select count(*)::int as n from users`)).rows[0];
    expect(after).toEqual(before);
  });
});
