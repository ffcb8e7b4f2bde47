import jwt from 'jsonwebtoken';
import type { NextFunction, Request, Response } from 'express';
import { roleAllows, type Role } from '../../shared/schemas/roles';
import { AppError, errors } from './errors';
import type { RouteAccess } from './http';

export const SESSION_COOKIE = 'pw_session';
/** A session lasts one shift. */
export const SESSION_TTL_SECONDS = 12 * 60 * 60;

export interface SessionUser {
  id: string;
  username: string;
  displayName: string;
  email: string | null;
  role: Role;
}

export interface StationPrincipal {
  stationId: string;
  stationName: string;
  keyId: string;
}

declare module 'express-serve-static-core' {
  interface Request {
    user?: SessionUser;
    station?: StationPrincipal;
    /** Why a presented session was not accepted (expired, revoked, ...), for a clear 401. */
    sessionProblem?: 'expired' | 'revoked' | 'invalid';
    /** The body's text as received (JSON routes), kept for records that must store it verbatim. */
    rawBody?: string;
  }
}

interface TokenClaims {
  sub: string;
  tv: number;
}

export function signSession(secret: string, userId: string, tokenVersion: number, now: Date): string {
  const iat = Math.floor(now.getTime() / 1000);
  return jwt.sign(
    { sub: userId, tv: tokenVersion, iat, exp: iat + SESSION_TTL_SECONDS } satisfies TokenClaims & {
      iat: number;
      exp: number;
    },
    secret,
    { algorithm: 'HS256' },
  );
}

export type VerifyResult = { ok: true; claims: TokenClaims } | { ok: false; problem: 'expired' | 'invalid' };

export function verifySession(secret: string, token: string, now: Date): VerifyResult {
  try {
    const claims = jwt.verify(token, secret, {
      algorithms: ['HS256'],
      clockTimestamp: Math.floor(now.getTime() / 1000),
    }) as jwt.JwtPayload;
    if (typeof claims.sub !== 'string' || typeof claims.tv !== 'number')
      return { ok: false, problem: 'invalid' };
    return { ok: true, claims: { sub: claims.sub, tv: claims.tv } };
  } catch (e) {
    return { ok: false, problem: e instanceof jwt.TokenExpiredError ? 'expired' : 'invalid' };
  }
}

export function setSessionCookie(res: Response, token: string, secure: boolean): void {
  res.cookie(SESSION_COOKIE, token, {
    httpOnly: true,
    sameSite: 'strict',
    secure,
    path: '/',
    maxAge: SESSION_TTL_SECONDS * 1000,
  });
}

export function clearSessionCookie(res: Response, secure: boolean): void {
  res.clearCookie(SESSION_COOKIE, { httpOnly: true, sameSite: 'strict', secure, path: '/' });
}

/**
 * Enforces a route's declared access. 401 when nobody (or no valid station key) is identified,
 * 403 when someone is identified but their role does not fit.
 */
export function requireAccess(
  access: RouteAccess,
): (req: Request, res: Response, next: NextFunction) => void {
  return (req: Request, _res: Response, next: NextFunction) => {
    if (access === 'anyone') return next();
    if (typeof access === 'object' && !Array.isArray(access) && 'people' in access) {
      if (req.station) return next();
      return requireAccess(access.people)(req, _res, next);
    }
    if (access === 'station') {
      if (!req.station) {
        return next(
          new AppError(
            401,
            'station.key_required',
            'A valid station key is required (X-Station-Key header).',
          ),
        );
      }
      return next();
    }
    if (!req.user) {
      if (req.sessionProblem === 'expired') {
        return next(new AppError(401, 'auth.session_expired', 'Your session has ended. Sign in again.'));
      }
      if (req.sessionProblem === 'revoked') {
        return next(new AppError(401, 'auth.session_revoked', 'Your session was ended. Sign in again.'));
      }
      return next(errors.authRequired());
    }
    if (!roleAllows(access, req.user.role)) return next(errors.forbidden());
    next();
  };
}
