import type { NextFunction, Request, Response } from 'express';
import { AppError } from './errors';
import { DEVICE_COOKIE, SESSION_COOKIE } from './auth';

const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/**
 * Cross-site request forgery guard for every state-changing request (JSON, multipart and body-less
 * alike). SameSite=Strict cookies are not enough: a "same-site" neighbour (another host of the plant's
 * domain) still gets them sent. So:
 * - a request that names an Origin must come from this server's own origin (its Host, or PUBLIC_URL);
 * - a request that carries one of our cookies but no Origin must say `Sec-Fetch-Site: same-origin`
 *   (browsers send Origin on every non-GET fetch; only old or non-browser clients lack both);
 * - station requests authenticate with the X-Station-Key header, which a foreign page cannot set
 *   without a CORS preflight the server never grants: they are not cookie-based and pass.
 */
export function sameOriginGuard(publicUrl: string) {
  const publicHost = new URL(publicUrl).host.toLowerCase();
  return (req: Request, _res: Response, next: NextFunction): void => {
    if (!STATE_CHANGING.has(req.method)) return next();
    if (req.get('x-station-key')) return next();
    const origin = req.get('origin');
    if (origin && origin !== 'null') {
      let host: string;
      try {
        host = new URL(origin).host.toLowerCase();
      } catch {
        return next(crossSite());
      }
      const own = (req.get('host') ?? '').toLowerCase();
      return host === own || host === publicHost ? next() : next(crossSite());
    }
    const withCookie = Boolean(req.cookies?.[SESSION_COOKIE] || req.cookies?.[DEVICE_COOKIE]);
    if (withCookie && req.get('sec-fetch-site') !== 'same-origin') return next(crossSite());
    next();
  };
}

function crossSite(): AppError {
  return new AppError(
    403,
    'request.cross_site',
    'This request did not come from a Phasewright page of this server, so it was refused. Reload the page and try again.',
  );
}
