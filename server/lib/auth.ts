import jwt from 'jsonwebtoken';
import type { NextFunction, Request, Response } from 'express';
import { roleAllows, type Role } from '#shared/schemas/roles';
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
    /** The JSON body was UTF-8 without a single \u escape, so none of its strings can hold NUL or a lone surrogate. */
    bodyTextPlain?: boolean;
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

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * Accepts only a token this server signed as a session: HS256, an expiry (a token without `exp`
 * would never end), a UUID subject and an integer token version. Anything else is 'invalid', never
 * an error further down (a subject that is not a UUID would otherwise reach the database).
 */
export function verifySession(secret: string, token: string, now: Date): VerifyResult {
  try {
    const claims = jwt.verify(token, secret, {
      algorithms: ['HS256'],
      clockTimestamp: Math.floor(now.getTime() / 1000),
    }) as jwt.JwtPayload;
    if (
      typeof claims.sub !== 'string' ||
      !UUID.test(claims.sub) ||
      !Number.isInteger(claims.tv) ||
      typeof claims.exp !== 'number' ||
      claims.typ !== undefined
    )
      return { ok: false, problem: 'invalid' };
    return { ok: true, claims: { sub: claims.sub, tv: claims.tv as number } };
  } catch (e) {
    return { ok: false, problem: e instanceof jwt.TokenExpiredError ? 'expired' : 'invalid' };
  }
}

/** The trusted-device cookie (see auth.service.ts): set after a successful sign-in, kept for a year. */
export const DEVICE_COOKIE = 'pw_device';
const DEVICE_TTL_SECONDS = 365 * 24 * 60 * 60;

export function signDeviceToken(secret: string, userId: string, deviceId: string, now: Date): string {
  const iat = Math.floor(now.getTime() / 1000);
  return jwt.sign({ typ: 'device', sub: userId, dev: deviceId, iat, exp: iat + DEVICE_TTL_SECONDS }, secret, {
    algorithm: 'HS256',
  });
}

export function verifyDeviceToken(
  secret: string,
  token: string | undefined,
  now: Date,
): { userId: string; deviceId: string } | undefined {
  if (!token) return undefined;
  try {
    const c = jwt.verify(token, secret, {
      algorithms: ['HS256'],
      clockTimestamp: Math.floor(now.getTime() / 1000),
    }) as jwt.JwtPayload;
    if (c.typ !== 'device' || typeof c.sub !== 'string' || typeof c.dev !== 'string') return undefined;
    return { userId: c.sub, deviceId: c.dev };
  } catch {
    return undefined;
  }
}

export function setDeviceCookie(res: Response, token: string, secure: boolean): void {
  res.cookie(DEVICE_COOKIE, token, {
    httpOnly: true,
    sameSite: 'strict',
    secure,
    path: '/api/auth',
    maxAge: DEVICE_TTL_SECONDS * 1000,
  });
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
