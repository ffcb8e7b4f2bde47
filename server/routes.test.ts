import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROLES, roleAllows, type Role } from '#shared/schemas/roles';
import { TEST_ORIGIN, createTestApp, type TestApp } from '#tests/harness/test-app';
import { DEMO_ACCOUNTS } from './db/seed';
import { buildRoutes } from './routes';
import type { RouteDef } from './lib/http';
import { createLineFixture } from '#tests/harness/line-fixtures';

/**
 * Walks every registered route for every kind of caller. A new route is covered the moment it is
 * added to server/routes.ts: nothing here lists routes by hand.
 */
let t: TestApp;
const cookies = new Map<Role, string>();
let stationKey = '';

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ROLES) {
    const account = DEMO_ACCOUNTS.find((a) => a.role === role)!;
    const res = await request(t.app)
      .post('/api/auth/sign-in')
      .send({ username: account.username, password: account.password });
    expect(res.status).toBe(200);
    cookies.set(
      role,
      (res.headers['set-cookie'] as unknown as string[]).map((c) => c.split(';')[0]).join('; '),
    );
  }
  stationKey = (await createLineFixture(t.deps.db)).key;
});
afterAll(async () => {
  await t?.close();
});

/** Fills path parameters with a well-formed id that names nothing. */
function concretePath(path: string): string {
  return path.replace(/:(\w+)/g, (_m, name: string) =>
    /serial/i.test(name) ? 'NO-SUCH-SERIAL' : '00000000-0000-4000-8000-000000000000',
  );
}

type Caller = 'anonymous' | 'station' | Role;
const callers: Caller[] = ['anonymous', 'station', ...ROLES];

function expectation(r: RouteDef, caller: Caller): 'allowed' | 401 | 403 {
  if (r.access === 'anyone') return 'allowed';
  const stationToo = typeof r.access === 'object' && 'people' in r.access;
  if (r.access === 'station' || stationToo) {
    if (caller === 'station') return 'allowed';
    if (r.access === 'station') return 401; // people never pass as a station
  }
  if (caller === 'anonymous' || caller === 'station') return 401; // a station key is no person
  const people = typeof r.access === 'object' && 'people' in r.access ? r.access.people : r.access;
  return roleAllows(people as Exclude<typeof people, 'station'>, caller) ? 'allowed' : 403;
}

describe('every route answers each caller as its declared access says', () => {
  it('has routes to walk', () => {
    expect(buildRoutes(t.deps).length).toBeGreaterThan(10);
  });

  for (const caller of callers) {
    it(`for ${caller} callers`, async () => {
      const mismatches: string[] = [];
      for (const r of buildRoutes(t.deps)) {
        if (r.path === '/api/auth/sign-out') continue; // would end the session the walk relies on
        const path = concretePath(r.path);
        let req = request(t.app)[r.method](path);
        if (caller === 'station') req = req.set('X-Station-Key', stationKey);
        else if (caller !== 'anonymous')
          req = req.set('Origin', TEST_ORIGIN).set('Cookie', cookies.get(caller)!);
        if (r.method !== 'get' && r.method !== 'delete') req = req.send({});
        const res = await req;
        const want = expectation(r, caller);
        const ok = want === 'allowed' ? res.status !== 401 && res.status !== 403 : res.status === want;
        if (!ok)
          mismatches.push(
            `${r.method.toUpperCase()} ${r.path}: wanted ${want}, got ${res.status} ${res.body?.error?.code ?? ''}`,
          );
        if (res.status === 500)
          mismatches.push(`${r.method.toUpperCase()} ${r.path}: 500 for an empty request`);
      }
      expect(mismatches).toEqual([]);
    });
  }
});

describe('recipe desk access', () => {
  it('every route that changes a model or a recipe is for engineers only (admins included out)', () => {
    const changing = buildRoutes(t.deps).filter(
      (r) => r.method !== 'get' && /^\/api\/(models|recipes|what-if)/.test(r.path),
    );
    expect(changing.length).toBeGreaterThan(5);
    for (const r of changing)
      expect([r.method, r.path, r.access]).toEqual([r.method, r.path, { only: ['engineer'] }]);
    expect(roleAllows({ only: ['engineer'] }, 'admin')).toBe(false);
  });
});
