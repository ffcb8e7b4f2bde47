import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';

type Operation = {
  responses: Record<string, { content?: Record<string, { schema?: Record<string, unknown> }> }>;
};
let t: TestApp;
let paths: Record<string, Record<string, Operation>> = {};

beforeAll(async () => {
  t = await createTestApp();
  const res = await request(t.app).get('/api/openapi.json');
  expect(res.status).toBe(200);
  paths = res.body.paths;
});
afterAll(async () => {
  await t?.close();
});

/** The answers a route declares with a body (the added 400/401/403 have none): status → content types. */
function answers(path: string, method: string): Record<string, string[]> {
  const op = paths[path]?.[method];
  expect(op, `${method.toUpperCase()} ${path} is in the document`).toBeDefined();
  return Object.fromEntries(
    Object.entries(op.responses)
      .filter(([, r]) => r.content)
      .map(([status, r]) => [status, Object.keys(r.content!)]),
  );
}

describe('the OpenAPI document describes what the routes answer', () => {
  it('every recipe desk and sign-in route that answers with JSON names the schema of its answer', () => {
    const json = (path: string, method: string, status: string) => {
      const r = paths[path][method].responses[status];
      expect(
        r.content?.['application/json']?.schema,
        `${method.toUpperCase()} ${path} ${status}`,
      ).toBeDefined();
    };
    for (const path of Object.keys(paths).filter((p) =>
      /^\/api\/(models|recipes|recipe-settings|what-if)/.test(p),
    )) {
      for (const method of Object.keys(paths[path])) {
        if (path.endsWith('/events')) continue; // an event stream, not JSON
        const declared = Object.keys(answers(path, method));
        expect(declared.length, `${method.toUpperCase()} ${path}`).toBe(1);
        json(path, method, declared[0]);
      }
    }
    for (const [path, method, status] of [
      ['/api/auth/sign-in', 'post', '200'],
      ['/api/auth/badge-sign-in', 'post', '200'],
      ['/api/auth/set-password', 'post', '200'],
      ['/api/auth/password-reset', 'post', '202'],
      ['/api/me', 'get', '200'],
    ] as const)
      json(path, method, status);
    expect(paths['/api/auth/sign-out'].post.responses['204']).toBeDefined();
  });

  it('the health, job, outbox and audit routes describe their answers too', () => {
    expect(answers('/api/health', 'get')).toEqual({
      '200': ['application/json'],
      '503': ['application/json'],
    });
    expect(answers('/api/admin/jobs/failed', 'get')).toEqual({ '200': ['application/json'] });
    expect(answers('/api/admin/jobs/{id}/replay', 'post')).toEqual({ '202': ['application/json'] });
    expect(answers('/api/admin/outbox', 'get')).toEqual({ '200': ['application/json'] });
    expect(answers('/api/audit', 'get')).toEqual({ '200': ['application/json'] });
    expect(answers('/api/audit.csv', 'get')).toEqual({ '200': ['text/csv'] });
  });

  it('a model list answer is described down to its fields', () => {
    const schema = paths['/api/models'].get.responses['200'].content!['application/json'].schema as {
      properties: { models: { items: { properties: Record<string, unknown> } } };
    };
    expect(Object.keys(schema.properties.models.items.properties)).toEqual(
      expect.arrayContaining(['id', 'code', 'activeRecipe', 'firstPassYield7d']),
    );
  });
});
