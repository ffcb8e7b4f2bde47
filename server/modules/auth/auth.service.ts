import { createHash, randomBytes } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { eq, lt, or } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import { normaliseBadgeCode } from '#shared/schemas/auth';
import type { SessionUser } from '#server/lib/auth';
import type { Mailer } from '../mail/mail.service';
import { insertAudit } from '../audit/audit.repository';
import {
  findUserByBadge,
  findUserById,
  findUserByUsername,
  reserveSignInAttempt,
  updateUser,
  nextTokenVersion,
} from '../users/users.repository';
import type { UserRecord } from '../users/users.table';
import { authTokens } from './auth.table';
import { LOCKOUT_MINUTES, authErrors } from './auth.errors';
import type { FailureThrottle } from './throttle';

/**
 * Sign-in protection, after OWASP ASVS v4.0.3 §2.2.1 (anti-automation: soft lockout plus rate limiting,
 * without letting an attacker lock the real owner out):
 * - per client address: IP_FAILURE_LIMIT failed attempts in 15 minutes, then 429 for that address
 *   (the address is the connection's, or X-Forwarded-For only behind a configured TRUST_PROXY);
 * - per account: LOCKOUT_THRESHOLD consecutive failures lock the account for LOCKOUT_MINUTES for every
 *   browser it has not been used from; attempts are counted atomically before the secret is checked;
 * - per trusted device (OWASP "device cookies"): a browser where the person signed in successfully
 *   carries a signed device cookie; the account lock does not apply to it, and it has its own
 *   allowance of LOCKOUT_THRESHOLD failures per LOCKOUT_MINUTES. So a locked account, even every
 *   administrator's, still opens on the owner's own browser, while guessers elsewhere stay locked out.
 * Every refusal of a name or secret answers the same 401 with the same words and one bcrypt
 * comparison, whether the account exists, the secret is wrong or the account is locked.
 */
export const LOCKOUT_THRESHOLD = 5;
export { LOCKOUT_MINUTES };
export const INVITE_TTL_HOURS = 7 * 24;
export const RESET_TTL_HOURS = 1;

/** A bcrypt hash of a random string, compared against when there is nothing real to compare (equal timing). */
const DUMMY_HASH = bcrypt.hashSync(randomBytes(16).toString('hex'), 10);

export interface AuthContext {
  db: Db;
  clock: () => Date;
  /** Failed attempts per client address. */
  throttle: FailureThrottle;
  /** Failed attempts per trusted device (device cookie id). */
  deviceThrottle: FailureThrottle;
  ip: string;
  /** The browser's device cookie, when it carries a valid one: whose it is and its id. */
  device?: { userId: string; deviceId: string };
}

export function toSessionUser(u: UserRecord): SessionUser {
  return { id: u.id, username: u.username, displayName: u.displayName, email: u.email, role: u.role };
}

export function hashSecret(secret: string, cost: number): Promise<string> {
  return bcrypt.hash(secret, cost);
}

/**
 * Checks one credential (password, or badge + PIN) under the rules above. Disabled accounts are
 * refused only after a correct secret (so a guess learns nothing). Every failure and lock is audited;
 * `auth.sign_in_failed` is written exactly once per secret actually compared with the account's hash.
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
  if (!ctx.throttle.reserve(ctx.ip, now)) {
    await insertAudit(ctx.db, {
      action: 'auth.rate_limited',
      subjectType: 'sign-in',
      subjectId: label,
      ip: ctx.ip,
    });
    throw authErrors.rateLimited(ctx.throttle.retryAfterMs(ctx.ip, now) / 1000);
  }
  const hash = kind === 'password' ? user?.passwordHash : user?.pinHash;
  const deviceId = user && ctx.device?.userId === user.id ? ctx.device.deviceId : undefined;
  const trusted = deviceId !== undefined && ctx.deviceThrottle.reserve(deviceId, now);

  // Count the attempt against the account first (atomically); a locked account is not checked.
  let reserved: { attempt: number; locks: boolean } | null = null;
  if (user && hash && !trusted) {
    reserved = await reserveSignInAttempt(
      ctx.db,
      user.id,
      now,
      LOCKOUT_THRESHOLD,
      new Date(now.getTime() + LOCKOUT_MINUTES * 60_000),
    );
    if (!reserved) {
      await bcrypt.compare(secret, DUMMY_HASH);
      await insertAudit(ctx.db, {
        action: 'auth.sign_in_refused_locked',
        subjectType: 'user',
        subjectId: user.id,
        ip: ctx.ip,
      });
      throw wrong();
    }
  }
  const ok = await bcrypt.compare(secret, hash ?? DUMMY_HASH);
  if (!ok || !user || !hash) {
    if (!user || !hash) {
      await insertAudit(ctx.db, {
        action: 'auth.sign_in_failed',
        subjectType: user ? 'user' : 'sign-in',
        subjectId: user?.id ?? label,
        ip: ctx.ip,
      });
      throw wrong();
    }
    await insertAudit(ctx.db, {
      action: 'auth.sign_in_failed',
      subjectType: 'user',
      subjectId: user.id,
      after: { failedAttempts: reserved?.attempt ?? null, method: kind, trustedDevice: trusted },
      ip: ctx.ip,
    });
    if (reserved?.locks && reserved.attempt === LOCKOUT_THRESHOLD) {
      await insertAudit(ctx.db, {
        action: 'auth.account_locked',
        subjectType: 'user',
        subjectId: user.id,
        reason: `${reserved.attempt} failed sign-ins in a row`,
        after: { lockedUntil: new Date(now.getTime() + LOCKOUT_MINUTES * 60_000).toISOString() },
        ip: ctx.ip,
      });
    }
    throw wrong();
  }
  ctx.throttle.forgive(ctx.ip, now);
  if (trusted) ctx.deviceThrottle.forgive(deviceId, now);
  if (user.disabled) {
    await insertAudit(ctx.db, {
      action: 'auth.sign_in_refused_disabled',
      subjectType: 'user',
      subjectId: user.id,
      ip: ctx.ip,
    });
    throw authErrors.disabled();
  }
  // A trusted device signs in past a lock without clearing it: the guessers elsewhere stay locked out.
  const signedIn = await updateUser(
    ctx.db,
    user.id,
    trusted && user.lockedUntil && user.lockedUntil > now
      ? { lastSignInAt: now }
      : { failedAttempts: 0, lockedUntil: null, lastSignInAt: now },
  );
  await insertAudit(ctx.db, {
    actorId: user.id,
    actorName: user.displayName,
    action: 'auth.signed_in',
    subjectType: 'user',
    subjectId: user.id,
    after: { method: kind, trustedDevice: trusted },
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
  return checkCredential(ctx, 'badge', user, pin, `badge:${normaliseBadgeCode(badgeCode)}`);
}

/** Ends every session of a person (sign-out): sessions carry the token version, which moves on. */
export async function revokeSessions(db: DbOrTx, userId: string): Promise<void> {
  await updateUser(db, userId, { tokenVersion: nextTokenVersion() });
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
      tokenVersion: nextTokenVersion(),
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
