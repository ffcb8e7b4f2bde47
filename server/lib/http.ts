import type { Request, Response } from 'express';
import type { Access } from '../../shared/schemas/roles';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

/**
 * Who may call a route: people by role (see shared/schemas/roles.ts), or a test station by its key.
 * Every route declares one; the app refuses to register a route without it.
 */
export type RouteAccess = Access | 'station';

export interface RouteDef {
  method: Method;
  /** Express 5 path, mounted as is (routes carry their full /api/... path). */
  path: string;
  access: RouteAccess;
  /** One line for the route list and the OpenAPI document. */
  summary: string;
  /** Express middleware to run before the handler (e.g. multer for uploads). */
  before?: ((req: Request, res: Response, next: (err?: unknown) => void) => void)[];
  handler: (req: Request, res: Response) => unknown;
}

/** Identity helper that keeps route literals typed. */
export function route(def: RouteDef): RouteDef {
  return def;
}
