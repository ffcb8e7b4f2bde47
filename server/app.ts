import fs from 'node:fs';
import path from 'node:path';
import express, { type NextFunction, type Request, type Response } from 'express';
import helmet from 'helmet';
import cookieParser from 'cookie-parser';
import { ZodError } from 'zod';
import '#shared/schemas/plain-messages';
import type { AppDeps } from './deps';
import { buildRoutes } from './routes';
import { AppError } from './lib/errors';
import { SESSION_COOKIE, requireAccess, verifySession } from './lib/auth';
import { callerOf, parseRequest, type RouteDef } from './lib/http';
import { inputGuard } from './lib/input-guard';
import { sameOriginGuard } from './lib/same-origin';
import multer from 'multer';
import { loadSessionUser } from './modules/auth/auth.service';
import { authenticateStationKey } from './modules/stations/stations.service';
import { stationErrors } from './modules/stations/stations.errors';

/** Largest JSON body accepted (a 500-turn measurement with every edge is ~250 KB). */
export const JSON_BODY_LIMIT = '2mb';

/** Issues listed in one error answer; the rest are counted, so a hostile body cannot make a huge answer. */
export const MAX_LISTED_ISSUES = 20;

function boundedIssues(issues: { path: string; message: string }[], total = issues.length) {
  if (
    total <= MAX_LISTED_ISSUES ||
    (issues.length <= MAX_LISTED_ISSUES + 1 && issues.at(-1)?.path === '(more)')
  )
    return issues;
  const more = total - MAX_LISTED_ISSUES;
  return [
    ...issues.slice(0, MAX_LISTED_ISSUES),
    { path: '(more)', message: `and ${more} more problem${more === 1 ? '' : 's'}, not listed` },
  ];
}

function zodIssues(e: ZodError) {
  return boundedIssues(
    e.issues
      .slice(0, MAX_LISTED_ISSUES)
      .map((i) => ({ path: i.path.join('.') || '(body)', message: i.message })),
    e.issues.length,
  );
}

/** Builds the HTTP application without listening: tests call it with their own dependencies. */
export function createApp(deps: AppDeps, opts: { routes?: RouteDef[] } = {}) {
  const app = express();
  app.disable('x-powered-by');
  // X-Forwarded-For is believed only from the proxies TRUST_PROXY names (default: none).
  app.set('trust proxy', deps.env.TRUST_PROXY);
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
      verify: (req, _res, buf, encoding) => {
        const text = buf.toString('utf8');
        (req as Request).rawBody = text;
        // Read as UTF-8, JSON text can put a NUL or a lone surrogate into a string only as a \u escape
        // (JSON.parse refuses a raw control character, and decoding UTF-8 never yields a lone surrogate):
        // without one, the input guard need not walk the parsed body (a measurement's thousands of values).
        (req as Request).bodyTextPlain = encoding === 'utf-8' && !text.includes('\\u');
      },
    }),
  );
  app.use(cookieParser());
  app.use(sameOriginGuard(deps.env.PUBLIC_URL));
  app.use(inputGuard);

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
    const station = await authenticateStationKey(deps.pool, key.trim(), deps.clock());
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
        const { params, query, body } = parseRequest(r, req);
        await r.handle({ params, query, body, caller: callerOf(req, r.access) }, res, req);
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
      const listed = err.details?.issues as { path: string; message: string }[] | undefined;
      const issues = listed ? boundedIssues(listed) : undefined;
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
    // The body reader's other refusals: answered in plain words, never as a 500.
    const bodyRefusal = bodyReaderRefusal(e);
    if (bodyRefusal) {
      res
        .status(bodyRefusal.status)
        .json({ error: { code: bodyRefusal.code, message: bodyRefusal.message } });
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

/**
 * Errors of the JSON body reader (body-parser) and the router that a client caused: an unsupported
 * charset or Content-Encoding (415), a body that does not inflate (corrupt gzip/deflate/brotli), a
 * path escape that does not decode (400). Anything else with a 4xx status from these layers is a bad
 * request too; it is never logged as a server fault.
 */
function bodyReaderRefusal(
  e: {
    type?: string;
    status?: number;
    charset?: string;
    encoding?: string;
  } | null,
): { status: number; code: string; message: string } | null {
  if (!e || typeof e.status !== 'number' || e.status < 400 || e.status >= 500) return null;
  switch (e.type) {
    case 'charset.unsupported':
      return {
        status: 415,
        code: 'request.unsupported_charset',
        message: `The body's character set "${String(e.charset ?? '').slice(0, 40)}" is not supported: send UTF-8.`,
      };
    case 'encoding.unsupported':
      return {
        status: 415,
        code: 'request.unsupported_encoding',
        message: `The body's Content-Encoding "${String(e.encoding ?? '').slice(0, 40)}" is not supported: send it plain, gzip, deflate or br.`,
      };
    case 'request.aborted':
      return { status: 400, code: 'request.aborted', message: 'The body ended before it was complete.' };
    case 'request.size.invalid':
      return {
        status: 400,
        code: 'request.size_mismatch',
        message: 'The body is not as long as its Content-Length says.',
      };
    default:
      return {
        status: 400,
        code: 'request.unreadable',
        message:
          'The request could not be read: its body does not decode (a corrupt compressed body?) or its address is not valid.',
      };
  }
}
