import type { Request, Response } from 'express';
import type { ZodType } from 'zod';
import type { Access } from '../../shared/schemas/roles';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

/**
 * Who may call a route: people by role (see shared/schemas/roles.ts), or a test station by its key.
 * Every route declares one; the app refuses to register a route without it.
 */
export type RouteAccess = Access | 'station' | { people: Access; station: true };

export interface RouteDef {
  method: Method;
  /** Express 5 path, mounted as is (routes carry their full /api/... path). */
  path: string;
  access: RouteAccess;
  /** One line for the route list and the OpenAPI document. */
  summary: string;
  /** Request body and query contracts, for the OpenAPI document (handlers still parse them). */
  body?: ZodType;
  query?: ZodType;
  /** Body is multipart/form-data (file upload); described in the OpenAPI document. */
  multipart?: { fileField: string; fields: Record<string, string> };
  /** Express middleware to run before the handler (e.g. multer for uploads). */
  before?: ((req: Request, res: Response, next: (err?: unknown) => void) => void)[];
  handler: (req: Request, res: Response) => unknown;
}

/** Identity helper that keeps route literals typed. */
export function route(def: RouteDef): RouteDef {
  return def;
}
