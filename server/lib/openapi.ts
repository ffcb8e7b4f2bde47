import { z } from 'zod';
import type { RouteDef } from './http';

/**
 * The OpenAPI 3.1 document, generated from the registered routes and their zod contracts, so the
 * station integrators' reference can never drift from what the server accepts.
 */
export function buildOpenApi(routes: RouteDef[], version: string) {
  const paths: Record<string, Record<string, unknown>> = {};
  for (const r of routes) {
    const path = r.path.replace(/:(\w+)/g, '{$1}');
    const declared = r.request?.params ? toParams(r.request.params, 'path') : [];
    const params = [...r.path.matchAll(/:(\w+)/g)].map(
      (m) =>
        declared.find((d) => d.name === m[1]) ?? {
          name: m[1],
          in: 'path',
          required: true,
          schema: { type: 'string' },
        },
    );
    const querySchema = r.request?.query;
    const query = querySchema ? toParams(querySchema, 'query') : [];
    const bodySchema = r.request?.body ?? r.serviceParsedBody;
    const security =
      r.access === 'anyone'
        ? []
        : r.access === 'station'
          ? [{ stationKey: [] }]
          : typeof r.access === 'object' && 'people' in r.access
            ? [{ sessionCookie: [] }, { stationKey: [] }]
            : [{ sessionCookie: [] }];
    const op: Record<string, unknown> = {
      summary: r.summary,
      'x-access': r.access,
      parameters: [...params, ...query],
      security,
      responses: {
        ...(r.responses ? {} : { '200': { description: 'Success' } }),
        ...Object.fromEntries(
          Object.entries(r.responses ?? {}).map(([status, doc]) => [
            status,
            {
              description: doc.description,
              ...(doc.schema || doc.contentType
                ? {
                    content: {
                      [doc.contentType ?? 'application/json']: doc.schema
                        ? { schema: z.toJSONSchema(doc.schema, { io: 'output', unrepresentable: 'any' }) }
                        : {},
                    },
                  }
                : {}),
            },
          ]),
        ),
        '400': {
          description: 'Invalid request: `{ error: { code, message, issues: [{ path, message }] } }`',
        },
        ...(r.access === 'anyone' ? {} : { '401': { description: 'Not signed in / no valid station key' } }),
        ...(Array.isArray(r.access) || (typeof r.access === 'object' && 'only' in r.access)
          ? { '403': { description: 'Role not allowed' } }
          : {}),
      },
    };
    if (bodySchema) {
      op.requestBody = {
        required: true,
        content: {
          'application/json': { schema: z.toJSONSchema(bodySchema, { io: 'input', unrepresentable: 'any' }) },
        },
      };
    }
    if (r.multipart) {
      op.requestBody = {
        required: true,
        content: {
          'multipart/form-data': {
            schema: {
              type: 'object',
              properties: {
                [r.multipart.fileField]: { type: 'string', format: 'binary' },
                ...Object.fromEntries(
                  Object.entries(r.multipart.fields).map(([k, d]) => [k, { type: 'string', description: d }]),
                ),
              },
              required: [r.multipart.fileField],
            },
          },
        },
      };
    }
    paths[path] = { ...(paths[path] ?? {}), [r.method]: op };
  }
  return {
    openapi: '3.1.0',
    info: {
      title: 'Phasewright API',
      version,
      description:
        'Stations authenticate with `X-Station-Key: <key>` (created by an administrator, shown once). People use the session cookie set by sign-in. Errors are `{ error: { code, message, issues? } }` with stable dotted codes.',
    },
    components: {
      securitySchemes: {
        stationKey: { type: 'apiKey', in: 'header', name: 'X-Station-Key' },
        sessionCookie: { type: 'apiKey', in: 'cookie', name: 'pw_session' },
      },
    },
    paths,
  };
}

function toParams(schema: z.ZodType, where: 'query' | 'path') {
  const json = z.toJSONSchema(schema, { io: 'input', unrepresentable: 'any' }) as {
    properties?: Record<string, object>;
    required?: string[];
  };
  return Object.entries(json.properties ?? {}).map(([name, s]) => ({
    name,
    in: where,
    required: where === 'path' || (json.required?.includes(name) ?? false),
    schema: s,
  }));
}
