import fs from 'node:fs';
import path from 'node:path';
import express, { type NextFunction, type Request, type Response } from 'express';
import helmet from 'helmet';
import cookieParser from 'cookie-parser';
import { ZodError } from 'zod';
import type { AppDeps } from './deps';
import { buildRoutes } from './routes';
import { AppError } from './lib/errors';
import { SESSION_COOKIE, requireAccess, verifySession } from './lib/auth';
import type { RouteDef } from './lib/http';
import multer from 'multer';
import { loadSessionUser } from './modules/auth/auth.service';
import { authenticateStationKey, stationErrors } from './modules/stations/stations.service';

/** Largest JSON body accepted (a 500-turn measurement with every edge is ~250 KB). */
export const JSON_BODY_LIMIT = '2mb';

function zodIssues(e: ZodError) {
  return e.issues.map((i) => ({ path: i.path.join('.') || '(body)', message: i.message }));
}

/** Builds the HTTP application without listening: tests call it with their own dependencies. */
export function createApp(deps: AppDeps, opts: { routes?: RouteDef[] } = {}) {
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', 'loopback');
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: { upgradeInsecureRequests: deps.env.COOKIE_SECURE ? [] : null },
      },
      hsts: deps.env.COOKIE_SECURE,
    }),
  );
  app.use(
    express.json({
      limit: JSON_BODY_LIMIT,
      verify: (req, _res, buf) => {
        (req as Request).rawBody = buf.toString('utf8');
      },
    }),
  );
  app.use(cookieParser());

  // Identify the caller once: a session cookie names a person (checked against the account's
  // token version and disabled flag on every request, so revocation is immediate).
  app.use(async (req: Request, _res: Response, next: NextFunction) => {
    const token = req.cookies?.[SESSION_COOKIE] as string | undefined;
    if (!token) return next();
    const verified = verifySession(deps.env.SESSION_SECRET, token, deps.clock());
    if (!verified.ok) {
      req.sessionProblem = verified.problem;
      return next();
    }
    const loaded = await loadSessionUser(deps.db, verified.claims.sub, verified.claims.tv);
    if ('user' in loaded) req.user = loaded.user;
    else req.sessionProblem = loaded.problem;
    next();
  });

  // A station identifies itself with its key; a wrong or revoked key is refused outright.
  app.use(async (req: Request, _res: Response, next: NextFunction) => {
    const key = req.get('x-station-key');
    if (!key) return next();
    const station = await authenticateStationKey(deps.db, key.trim(), deps.clock());
    if (!station) return next(stationErrors.keyInvalid());
    req.station = station;
    next();
  });

  const routes = opts.routes ?? buildRoutes(deps);
  for (const r of routes) {
    if (!r.access) throw new Error(`Route ${r.method.toUpperCase()} ${r.path} declares no access`);
    app[r.method](
      r.path,
      requireAccess(r.access),
      ...(r.before ?? []),
      async (req: Request, res: Response) => {
        await r.handler(req, res);
      },
    );
  }

  app.use('/api', (_req, _res, next) => next(new AppError(404, 'route.not_found', 'No such API route.')));

  // The client is looked for on each request, not once at start: `npm start` builds it while the server
  // is already starting, so it may appear a few seconds after the server listens.
  const dist = path.resolve(deps.env.CLIENT_DIST);
  const indexHtml = path.join(dist, 'index.html');
  app.use(express.static(dist, { index: false, maxAge: '1h' }));
  app.get('/{*splat}', (_req, res, next) => {
    if (!fs.existsSync(indexHtml)) return next();
    res.setHeader('cache-control', 'no-cache');
    res.sendFile(indexHtml);
  });

  // One place turns every failure into `{ error: { code, message, issues? } }`.
  app.use((err: unknown, req: Request, res: Response, _next: NextFunction) => {
    if (err instanceof ZodError) {
      const issues = zodIssues(err);
      res.status(400).json({
        error: {
          code: 'request.invalid',
          message: `The request is not valid: ${issues[0]?.path}: ${issues[0]?.message}`,
          issues,
        },
      });
      return;
    }
    if (err instanceof AppError) {
      const issues = (err.details?.issues as { path: string; message: string }[] | undefined) ?? undefined;
      res
        .status(err.status)
        .json({ error: { code: err.code, message: err.message, ...(issues ? { issues } : {}) } });
      return;
    }
    const e = err as { type?: string; status?: number; message?: string };
    if (err instanceof multer.MulterError) {
      const tooLarge = err.code === 'LIMIT_FILE_SIZE';
      res.status(tooLarge ? 413 : 400).json({
        error: {
          code: tooLarge ? 'upload.too_large' : 'upload.invalid',
          message: tooLarge ? 'The file is larger than this upload allows.' : err.message,
        },
      });
      return;
    }
    if (e?.type === 'entity.too.large') {
      res.status(413).json({
        error: { code: 'request.too_large', message: `The body is larger than ${JSON_BODY_LIMIT}.` },
      });
      return;
    }
    if (e?.type === 'entity.parse.failed') {
      res
        .status(400)
        .json({ error: { code: 'request.malformed_json', message: 'The body is not valid JSON.' } });
      return;
    }
    deps.logger.error({ err, method: req.method, url: req.originalUrl }, 'unhandled error');
    res.status(500).json({
      error: {
        code: 'server.internal',
        message: 'Something went wrong on the server. It has been logged.',
      },
    });
  });

  return app;
}
