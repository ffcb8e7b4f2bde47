import type { Request, Response } from 'express';
import type { AppDeps } from '#server/deps';
import { randomUUID } from 'node:crypto';
import {
  DEVICE_COOKIE,
  clearSessionCookie,
  setDeviceCookie,
  setSessionCookie,
  signDeviceToken,
  signSession,
  verifyDeviceToken,
} from '#server/lib/auth';
import { defineRoute } from '#server/lib/http';
import {
  badgeSignInSchema,
  meResponseSchema,
  passwordResetAcceptedSchema,
  passwordResetRequestSchema,
  passwordSignInSchema,
  setPasswordSchema,
} from '#shared/schemas/auth';
import { insertAudit } from '../audit/audit.repository';
import { findUserByEmail } from '../users/users.repository';
import type { UserRecord } from '../users/users.table';
import {
  LOCKOUT_MINUTES,
  LOCKOUT_THRESHOLD,
  completeLinkToken,
  requestPasswordReset,
  revokeSessions,
  signInWithBadge,
  signInWithPassword,
  toSessionUser,
  type AuthContext,
} from './auth.service';
import { FailureThrottle } from './throttle';

/** Failed sign-ins allowed per client address in 15 minutes before it is refused for a while. */
export const IP_FAILURE_LIMIT = 20;

export function authRoutes(deps: AppDeps) {
  const throttle = new FailureThrottle(IP_FAILURE_LIMIT, 15 * 60_000);
  const deviceThrottle = new FailureThrottle(LOCKOUT_THRESHOLD, LOCKOUT_MINUTES * 60_000);
  const ctx = (req: Request): AuthContext => ({
    db: deps.db,
    clock: deps.clock,
    throttle,
    deviceThrottle,
    ip: req.ip ?? '',
    device: verifyDeviceToken(
      deps.env.SESSION_SECRET,
      req.cookies?.[DEVICE_COOKIE] as string | undefined,
      deps.clock(),
    ),
  });
  const startSession = (req: Request, res: Response, user: UserRecord) => {
    const now = deps.clock();
    setSessionCookie(
      res,
      signSession(deps.env.SESSION_SECRET, user.id, user.tokenVersion, now),
      deps.env.COOKIE_SECURE,
    );
    // This browser is now a trusted device of this person (its id is kept when it already was).
    const known = ctx(req).device;
    const deviceId = known?.userId === user.id ? known.deviceId : randomUUID();
    setDeviceCookie(
      res,
      signDeviceToken(deps.env.SESSION_SECRET, user.id, deviceId, now),
      deps.env.COOKIE_SECURE,
    );
    res.json({ user: toSessionUser(user) });
  };
  return [
    defineRoute({
      method: 'post',
      path: '/api/auth/sign-in',
      access: 'anyone',
      summary: 'Sign in with user name and password',
      request: { body: passwordSignInSchema },
      responses: { 200: { description: 'Signed in: the session cookie is set', schema: meResponseSchema } },
      handle: async ({ body }, res, req) => {
        const { username, password } = body;
        startSession(req, res, await signInWithPassword(ctx(req), username, password));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/auth/badge-sign-in',
      access: 'anyone',
      summary: 'Sign in at a station with badge code and PIN',
      request: { body: badgeSignInSchema },
      responses: { 200: { description: 'Signed in: the session cookie is set', schema: meResponseSchema } },
      handle: async ({ body }, res, req) => {
        const { badgeCode, pin } = body;
        startSession(req, res, await signInWithBadge(ctx(req), badgeCode, pin));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/auth/sign-out',
      access: 'anyone',
      summary: 'End this session (and every other session of the person: the token version moves on)',
      responses: { 204: { description: 'Signed out: the session cookie is cleared' } },
      handle: async ({ caller: { user } }, res, req) => {
        if (user) {
          // Server-side revocation: a copied session cookie stops working at once.
          await revokeSessions(deps.db, user.id);
          await insertAudit(deps.db, {
            actorId: user.id,
            actorName: user.displayName,
            action: 'auth.signed_out',
            subjectType: 'user',
            subjectId: user.id,
            ip: req.ip ?? null,
          });
        }
        clearSessionCookie(res, deps.env.COOKIE_SECURE);
        res.status(204).end();
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/me',
      access: 'signed-in',
      summary: 'The signed-in person',
      responses: { 200: { description: 'The signed-in person', schema: meResponseSchema } },
      handle: ({ caller }, res) => {
        res.json({ user: caller.user });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/auth/password-reset',
      access: 'anyone',
      summary: 'E-mail a reset link (answered the same whether or not the address is known)',
      request: { body: passwordResetRequestSchema },
      responses: {
        202: {
          description: 'Accepted, whether or not the address is known',
          schema: passwordResetAcceptedSchema,
        },
      },
      handle: async ({ body }, res, req) => {
        const { email } = body;
        const user = await findUserByEmail(deps.db, email);
        await requestPasswordReset(deps.db, deps.mailer, user, {
          now: deps.clock(),
          publicUrl: deps.env.PUBLIC_URL,
          ip: req.ip ?? '',
        });
        res.status(202).json({ accepted: true });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/auth/set-password',
      access: 'anyone',
      summary: 'Choose a password with an invitation or reset link',
      request: { body: setPasswordSchema },
      responses: {
        200: {
          description: 'Password set and signed in: the session cookie is set',
          schema: meResponseSchema,
        },
      },
      handle: async ({ body }, res, req) => {
        const { token, password } = body;
        const user = await completeLinkToken(deps.db, token, password, {
          now: deps.clock(),
          bcryptCost: deps.env.BCRYPT_COST,
          ip: req.ip ?? '',
        });
        startSession(req, res, user);
      },
    }),
  ];
}
