import type { Request, Response } from 'express';
import type { z, ZodType } from 'zod';
import type { Access } from '#shared/schemas/roles';
import type { SessionUser, StationPrincipal } from './auth';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

/**
 * Who may call a route: people by role (see shared/schemas/roles.ts), or a test station by its key.
 * Every route declares one; the app refuses to register a route without it.
 */
export type RouteAccess = Access | 'station' | { people: Access; station: true };

/** The caller a handler gets, already narrowed by the route's declared access. */
export type CallerOf<A extends RouteAccess> = A extends 'anyone'
  ? { user?: SessionUser; station?: StationPrincipal }
  : A extends 'station'
    ? { station: StationPrincipal; user?: undefined }
    : A extends { people: Access; station: true }
      ? { user: SessionUser; station?: undefined } | { station: StationPrincipal; user?: undefined }
      : { user: SessionUser; station?: undefined };

/** A response the route may give: its status, a line for the document and, for JSON, its schema. */
export interface ResponseDoc {
  description: string;
  schema?: ZodType;
  /** Defaults to application/json when a schema is given. */
  contentType?: string;
}

/** The request parts a route declares; `createApp` validates each one before the handler runs. */
export interface RequestSchemas<P = unknown, Q = unknown, B = unknown> {
  params?: ZodType<P>;
  query?: ZodType<Q>;
  body?: ZodType<B>;
}

/** What a contract route's handler receives: parsed, typed values and the narrowed caller. */
export interface RouteInput<A extends RouteAccess, P, Q, B> {
  params: P;
  query: Q;
  body: B;
  caller: CallerOf<A>;
}

interface RouteCommon {
  method: Method;
  /** Express 5 path, mounted as is (routes carry their full /api/... path). */
  path: string;
  access: RouteAccess;
  /** One line for the route list and the OpenAPI document. */
  summary: string;
  /** Body is multipart/form-data (file upload); described in the OpenAPI document. */
  multipart?: { fileField: string; fields: Record<string, string> };
  /** Express middleware to run before the handler (e.g. multer for uploads). */
  before?: ((req: Request, res: Response, next: (err?: unknown) => void) => void)[];
  /** Responses by status, for the OpenAPI document (400/401/403 are added from the access and schemas). */
  responses?: Record<number, ResponseDoc>;
}

/**
 * A route whose definition is its whole HTTP contract (the only way to add a route): `createApp`
 * parses `request.params`, `request.query` and `request.body` with their zod schemas (a failure is
 * the usual 400 with `issues`) and calls `handle` with the parsed values and the caller.
 */
export interface RouteDef extends RouteCommon {
  request?: RequestSchemas;
  /**
   * A body the service parses itself, for its own refusals and the verbatim record (the station's
   * measurement post): described in the OpenAPI document, not parsed by `createApp`.
   */
  serviceParsedBody?: ZodType;
  // The input's types are checked where the route is made (`defineRoute`); here it is stored erased.
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  handle: (input: RouteInput<any, any, any, any>, res: Response, req: Request) => unknown;
}

type Out<S> = S extends ZodType ? z.output<S> : undefined;

/**
 * Defines a contract route: the handler's `params`, `query`, `body` and `caller` are typed from the
 * route's own schemas and access, and `createApp` hands them over already validated.
 */
export function defineRoute<
  const A extends RouteAccess,
  PS extends ZodType | undefined = undefined,
  QS extends ZodType | undefined = undefined,
  BS extends ZodType | undefined = undefined,
>(
  def: RouteCommon & {
    access: A;
    serviceParsedBody?: ZodType;
    request?: { params?: PS; query?: QS; body?: BS };
    handle: (input: RouteInput<A, Out<PS>, Out<QS>, Out<BS>>, res: Response, req: Request) => unknown;
  },
): RouteDef {
  return def as unknown as RouteDef;
}

/**
 * The caller of a request whose access check has passed, in the shape `CallerOf` promises: the station
 * for station routes (and for mixed routes when a key came, as the access check decides), the person
 * otherwise, even when a request also carries the other credential.
 */
export function callerOf(
  req: Request,
  access: RouteAccess,
): { user?: SessionUser; station?: StationPrincipal } {
  if (access === 'anyone') return { user: req.user, station: req.station };
  if (access === 'station') return { station: req.station };
  if (typeof access === 'object' && !Array.isArray(access) && 'people' in access) {
    return req.station ? { station: req.station } : { user: req.user };
  }
  return { user: req.user };
}

/** Parses a contract route's declared request parts (a ZodError becomes the usual 400). */
export function parseRequest(r: RouteDef, req: Request) {
  const s = r.request ?? {};
  return {
    params: s.params ? s.params.parse(req.params) : undefined,
    query: s.query ? s.query.parse(req.query) : undefined,
    body: s.body ? s.body.parse(req.body ?? {}) : undefined,
  };
}

/**
 * Sends a PDF the product made, to open in the browser's viewer (inline) under a file name, never
 * cached (it may name a unit's state at the time it was asked for). `headers` adds more, such as a hash.
 */
export function sendPdf(
  res: Response,
  pdf: Buffer,
  fileName: string,
  headers: Record<string, string> = {},
): void {
  res.setHeader('content-type', 'application/pdf');
  res.setHeader('content-disposition', `inline; filename="${fileName}"`);
  res.setHeader('cache-control', 'no-store');
  for (const [name, value] of Object.entries(headers)) res.setHeader(name, value);
  res.end(pdf);
}
