import request from 'supertest';
import { z } from 'zod';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../app';
import { createTestApp, sessionCookie, TEST_ORIGIN, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { defineRoute, type RouteDef } from './http';
import { buildOpenApi } from './openapi';

let t: TestApp;
let app: ReturnType<typeof createApp>;
let evan = '';
let stationKey = '';
let ran = 0;

const echoResponse = z.object({ id: z.string(), limit: z.number(), note: z.string(), who: z.string() });

const routes: RouteDef[] = [
  defineRoute({
    method: 'post',
    path: '/api/contract-check/:id',
    access: ['engineer'],
    summary: 'Echoes its parsed input',
    request: {
      params: z.object({ id: z.string().uuid('Not an id') }),
      query: z.object({ limit: z.coerce.number().int().min(1).max(10).default(5) }),
      body: z.object({ note: z.string().trim().min(2, 'Say more') }),
    },
    responses: { 200: { description: 'The parsed input', schema: echoResponse } },
    handle: ({ params, query, body, caller }, res) => {
      ran++;
      // Typed: caller.user is a SessionUser here (the access names people), no `!` needed.
      res.json(
        echoResponse.parse({ id: params.id, limit: query.limit, note: body.note, who: caller.user.username }),
      );
    },
  }),
  defineRoute({
    method: 'get',
    path: '/api/contract-check/station',
    access: { people: 'signed-in', station: true },
    summary: 'Says who called',
    handle: ({ caller }, res) => {
      res.json(caller.station ? { station: caller.station.stationName } : { person: caller.user.username });
    },
  }),
];

beforeAll(async () => {
  t = await createTestApp();
  app = createApp(t.deps, { routes });
  evan = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  stationKey = (await createLineFixture(t.deps.db, { code: 'HT-1' })).key;
});
afterAll(async () => {
  await t?.close();
});

const ID = '3f2c9b1e-8a4d-4c2b-9e1f-0a1b2c3d4e5f';

describe('the route definition is the HTTP contract', () => {
  it("the handler gets params, query and body parsed by the route's own schemas, defaults applied", async () => {
    const res = await request(app)
      .post(`/api/contract-check/${ID}`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', evan)
      .send({ note: '  narrow the window  ' });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ id: ID, limit: 5, note: 'narrow the window', who: 'evan.engineer' });
  });

  it('invalid params, query or body answer 400 naming the field, and the handler does not run', async () => {
    const before = ran;
    const post = (path: string, body: object) =>
      request(app).post(path).set('Origin', TEST_ORIGIN).set('Cookie', evan).send(body);
    const badParam = await post('/api/contract-check/not-an-id', { note: 'ok ok' });
    expect(badParam.status).toBe(400);
    expect(badParam.body.error.issues).toEqual([{ path: 'id', message: 'Not an id' }]);
    const badQuery = await post(`/api/contract-check/${ID}?limit=50`, { note: 'ok ok' });
    expect(badQuery.status).toBe(400);
    expect(badQuery.body.error.issues[0].path).toBe('limit');
    const badBody = await post(`/api/contract-check/${ID}`, { note: 'x' });
    expect(badBody.status).toBe(400);
    expect(badBody.body.error.issues).toEqual([{ path: 'note', message: 'Say more' }]);
    expect(ran).toBe(before);
  });

  it('access is checked before the input: a caller without the role gets 401/403, not a 400', async () => {
    const anon = await request(app).post('/api/contract-check/not-an-id').set('Origin', TEST_ORIGIN).send({});
    expect(anon.status).toBe(401);
  });

  it('the caller is narrowed by the declared access: a station key gives the station, a session the person', async () => {
    const asStation = await request(app).get('/api/contract-check/station').set('X-Station-Key', stationKey);
    expect(asStation.body).toEqual({ station: 'EOL-HT-1' });
    const asPerson = await request(app).get('/api/contract-check/station').set('Cookie', evan);
    expect(asPerson.body).toEqual({ person: 'evan.engineer' });
  });

  it('a person route called with a session and a station key gets the person, as the access check decided', async () => {
    const both = await request(app)
      .post(`/api/contract-check/${ID}`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', evan)
      .set('X-Station-Key', stationKey)
      .send({ note: 'both credentials' });
    expect(both.status).toBe(200);
    expect(both.body.who).toBe('evan.engineer');
    const mixed = await request(app)
      .get('/api/contract-check/station')
      .set('Cookie', evan)
      .set('X-Station-Key', stationKey);
    expect(mixed.body).toEqual({ station: 'EOL-HT-1' });
  });

  it('request and response schemas go into the OpenAPI document', () => {
    const doc = buildOpenApi(routes, 'test') as {
      paths: Record<string, Record<string, Record<string, unknown>>>;
    };
    const op = doc.paths['/api/contract-check/{id}'].post as {
      parameters: { name: string; in: string; required: boolean; schema: Record<string, unknown> }[];
      requestBody: { content: Record<string, { schema: { properties: Record<string, unknown> } }> };
      responses: Record<
        string,
        { content?: Record<string, { schema: { properties: Record<string, unknown> } }> }
      >;
    };
    expect(op.parameters).toEqual([
      expect.objectContaining({
        name: 'id',
        in: 'path',
        required: true,
        schema: expect.objectContaining({ format: 'uuid' }),
      }),
      expect.objectContaining({ name: 'limit', in: 'query', required: false }),
    ]);
    expect(Object.keys(op.requestBody.content['application/json'].schema.properties)).toEqual(['note']);
    expect(Object.keys(op.responses['200'].content!['application/json'].schema.properties)).toEqual([
      'id',
      'limit',
      'note',
      'who',
    ]);
    expect(op.responses['403']).toBeDefined();
  });
});
