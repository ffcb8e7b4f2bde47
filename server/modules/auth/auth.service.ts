import { createHash, randomBytes } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { eq, lt, or, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '../../db/client';
import type { SessionUser } from '../../lib/auth';
import type { Mailer } from '../mail/mail.service';
import { insertAudit } from '../audit/audit.repository';
import {
  findUserByBadge,
  findUserById,
  findUserByUsername,
  incrementFailedAttempts,
  updateUser,
} from '../users/users.repository';
import { users, type UserRecord } from '../users/users.table';
import { authTokens } from './auth.table';
import { authErrors } from './auth.errors';
import type { FailureThrottle } from './throttle';

/** Consecutive failures that lock an account, and for how long. */
export const LOCKOUT_THRESHOLD = 5;
export const LOCKOUT_MINUTES = 15;
export const INVITE_TTL_HOURS = 7 * 24;
export const RESET_TTL_HOURS = 1;

/** A bcrypt hash of a random string, compared against when the account does not exist (equal timing). */
const DUMMY_HASH = bcrypt.hashSync(randomBytes(16).toString('hex'), 10);

export interface AuthContext {
  db: Db;
  clock: () => Date;
  throttle: FailureThrottle;
  ip: string;
}

export function toSessionUser(u: UserRecord): SessionUser {
  return { id: u.id, username: u.username, displayName: u.displayName, email: u.email, role: u.role };
}

export function hashSecret(secret: string, cost: number): Promise<string> {
  return bcrypt.hash(secret, cost);
}

/**
 * Checks one credential (password, or badge + PIN) and applies the rules: per-address throttle,
 * per-account lockout after LOCKOUT_THRESHOLD consecutive failures, disabled accounts refused only
 * after a correct secret (so a guess learns nothing). Every failure and lock is audited.
 */
async function checkCredential(
  ctx: AuthContext,
  kind: 'password' | 'badge',
  user: UserRecord | undefined,
  secret: string,
  label: string,
): Promise<UserRecord> {
  const now = ctx.clock();
  const wrong = kind === 'password' ? authErrors.badCredentials : authErrors.badBadge;
  if (ctx.throttle.isBlocked(ctx.ip, now)) {
    await insertAudit(ctx.db, {
      action: 'auth.rate_limited',
      subjectType: 'sign-in',
      subjectId: label,
      ip: ctx.ip,
    });
    throw authErrors.rateLimited(ctx.throttle.retryAfterMs(ctx.ip, now) / 1000);
  }
  const hash = kind === 'password' ? user?.passwordHash : user?.pinHash;
  if (user?.lockedUntil && user.lockedUntil > now) {
    ctx.throttle.recordFailure(ctx.ip, now);
    await insertAudit(ctx.db, {
      action: 'auth.sign_in_refused_locked',
      subjectType: 'user',
      subjectId: user.id,
      ip: ctx.ip,
    });
    throw authErrors.locked(user.lockedUntil);
  }
  const ok = await bcrypt.compare(secret, hash ?? DUMMY_HASH);
  if (!ok || !user || !hash) {
    ctx.throttle.recordFailure(ctx.ip, now);
    if (!user) {
      await insertAudit(ctx.db, {
        action: 'auth.sign_in_failed',
        subjectType: 'sign-in',
        subjectId: label,
        ip: ctx.ip,
      });
      throw wrong();
    }
    const failures = await incrementFailedAttempts(ctx.db, user.id);
    await insertAudit(ctx.db, {
      action: 'auth.sign_in_failed',
      subjectType: 'user',
      subjectId: user.id,
      after: { failedAttempts: failures, method: kind },
      ip: ctx.ip,
    });
    if (failures >= LOCKOUT_THRESHOLD) {
      const until = new Date(now.getTime() + LOCKOUT_MINUTES * 60_000);
      await updateUser(ctx.db, user.id, { lockedUntil: until });
      await insertAudit(ctx.db, {
        action: 'auth.account_locked',
        subjectType: 'user',
        subjectId: user.id,
        reason: `${failures} failed sign-ins in a row`,
        after: { lockedUntil: until.toISOString() },
        ip: ctx.ip,
      });
      throw authErrors.locked(until);
    }
    throw wrong();
  }
  if (user.disabled) {
    await insertAudit(ctx.db, {
      action: 'auth.sign_in_refused_disabled',
      subjectType: 'user',
      subjectId: user.id,
      ip: ctx.ip,
    });
    throw authErrors.disabled();
  }
  const signedIn = await updateUser(ctx.db, user.id, {
    failedAttempts: 0,
    lockedUntil: null,
    lastSignInAt: now,
  });
  await insertAudit(ctx.db, {
    actorId: user.id,
    actorName: user.displayName,
    action: 'auth.signed_in',
    subjectType: 'user',
    subjectId: user.id,
    after: { method: kind },
    ip: ctx.ip,
  });
  return signedIn ?? user;
}

export async function signInWithPassword(ctx: AuthContext, username: string, password: string) {
  const user = await findUserByUsername(ctx.db, username);
  return checkCredential(ctx, 'password', user, password, username.trim().toLowerCase());
}

export async function signInWithBadge(ctx: AuthContext, badgeCode: string, pin: string) {
  const user = await findUserByBadge(ctx.db, badgeCode);
  return checkCredential(ctx, 'badge', user, pin, `badge:${badgeCode.trim().toUpperCase()}`);
}

/** Resolves a session token's subject to a live account: null when disabled or revoked. */
export async function loadSessionUser(
  db: DbOrTx,
  userId: string,
  tokenVersion: number,
): Promise<{ user: SessionUser } | { problem: 'revoked' }> {
  const user = await findUserById(db, userId);
  if (!user || user.disabled || user.tokenVersion !== tokenVersion) return { problem: 'revoked' };
  return { user: toSessionUser(user) };
}

function sha256(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

/** Creates a single-use link token; only its hash is stored. Returns the token for the e-mail. */
export async function issueLinkToken(
  db: DbOrTx,
  userId: string,
  purpose: 'invite' | 'reset',
  now: Date,
): Promise<string> {
  const token = randomBytes(32).toString('base64url');
  const hours = purpose === 'invite' ? INVITE_TTL_HOURS : RESET_TTL_HOURS;
  await db.insert(authTokens).values({
    userId,
    purpose,
    tokenHash: sha256(token),
    expiresAt: new Date(now.getTime() + hours * 3_600_000),
  });
  return token;
}

/**
 * Uses an invitation or reset token: sets the password, clears any lockout, ends every existing
 * session (token version + 1) and marks the token used, all in one transaction.
 */
export async function completeLinkToken(
  db: Db,
  token: string,
  password: string,
  opts: { now: Date; bcryptCost: number; ip: string },
): Promise<UserRecord> {
  const passwordHash = await hashSecret(password, opts.bcryptCost);
  return db.transaction(async (tx) => {
    const [row] = await tx
      .select()
      .from(authTokens)
      .where(eq(authTokens.tokenHash, sha256(token)))
      .for('update');
    if (!row || row.usedAt) throw authErrors.tokenInvalid();
    if (row.expiresAt <= opts.now) throw authErrors.tokenExpired();
    const before = await findUserById(tx, row.userId);
    if (!before || before.disabled) throw authErrors.tokenInvalid();
    await tx.update(authTokens).set({ usedAt: opts.now }).where(eq(authTokens.id, row.id));
    const user = await updateUser(tx, row.userId, {
      passwordHash,
      failedAttempts: 0,
      lockedUntil: null,
      tokenVersion: sql`${users.tokenVersion} + 1`,
    });
    await insertAudit(tx, {
      actorId: row.userId,
      actorName: before.displayName,
      action: row.purpose === 'invite' ? 'auth.invitation_accepted' : 'auth.password_reset',
      subjectType: 'user',
      subjectId: row.userId,
      ip: opts.ip,
    });
    return user!;
  });
}

/** Sends a reset link; silent when the address is unknown (the answer never reveals accounts). */
export async function requestPasswordReset(
  db: Db,
  mailer: Mailer,
  user: UserRecord | undefined,
  opts: { now: Date; publicUrl: string; ip: string; actor?: SessionUser },
): Promise<void> {
  if (!user || !user.email || user.disabled) return;
  const token = await issueLinkToken(db, user.id, 'reset', opts.now);
  await insertAudit(db, {
    actorId: opts.actor?.id ?? null,
    actorName: opts.actor?.displayName ?? null,
    action: 'auth.reset_link_sent',
    subjectType: 'user',
    subjectId: user.id,
    ip: opts.ip,
  });
  await mailer.send({
    to: user.email,
    subject: 'Phasewright: choose a new password',
    text: [
      `Hello ${user.displayName},`,
      '',
      'Someone asked to reset the password of your Phasewright account.',
      `Choose a new password within ${RESET_TTL_HOURS} hour here:`,
      `${opts.publicUrl}/set-password?token=${token}`,
      '',
      'If this was not you, ignore this message: your password stays as it is.',
    ].join('\n'),
  });
}

/** Removes link tokens that can no longer be used (expired or used more than a week ago). */
export async function pruneLinkTokens(db: DbOrTx, now: Date): Promise<number> {
  const weekAgo = new Date(now.getTime() - 7 * 24 * 3_600_000);
  const deleted = await db
    .delete(authTokens)
    .where(or(lt(authTokens.expiresAt, now), lt(authTokens.usedAt, weekAgo)))
    .returning({ id: authTokens.id });
  return deleted.length;
}
