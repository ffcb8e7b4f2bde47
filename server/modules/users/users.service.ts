import { and, eq, ne, sql } from 'drizzle-orm';
import type { Db } from '#server/db/client';
import { normaliseBadgeCode } from '#shared/schemas/auth';
import type { SessionUser } from '#server/lib/auth';
import type { Mailer } from '../mail/mail.service';
import type { UserRow } from '#shared/schemas/users';
import { createUserSchema, updateUserSchema } from '#shared/schemas/users';
import type { z } from 'zod';
import { insertAudit } from '../audit/audit.repository';
import { INVITE_TTL_HOURS, hashSecret, issueLinkToken, requestPasswordReset } from '../auth/auth.service';
import { findUserById, insertUser, listUsers, updateUser } from './users.repository';
import { users, type UserRecord } from './users.table';
import { userErrors } from './users.errors';

export interface UsersContext {
  db: Db;
  mailer: Mailer;
  clock: () => Date;
  bcryptCost: number;
  publicUrl: string;
  actor: SessionUser;
  ip: string;
}

/** What an administrator sees of an account: never a hash. */
export function toUserRow(u: UserRecord): UserRow {
  return {
    id: u.id,
    username: u.username,
    displayName: u.displayName,
    email: u.email,
    role: u.role,
    badgeCode: u.badgeCode,
    hasPin: u.pinHash !== null,
    hasPassword: u.passwordHash !== null,
    disabled: u.disabled,
    lockedUntil: u.lockedUntil?.toISOString() ?? null,
    failedAttempts: u.failedAttempts,
    lastSignInAt: u.lastSignInAt?.toISOString() ?? null,
    createdAt: u.createdAt.toISOString(),
  };
}

/** The audit trail's view of an account: the row an administrator sees. */
const auditView = (u: UserRecord) => toUserRow(u);

/** Maps unique-index violations onto clear conflicts. */
function mapUniqueViolation(e: unknown, username: string): never {
  const err = e as { code?: string; constraint?: string; cause?: { code?: string; constraint?: string } };
  const code = err.code ?? err.cause?.code;
  const constraint = err.constraint ?? err.cause?.constraint;
  if (code === '23505') {
    if (constraint === 'users_username_key') throw userErrors.usernameTaken(username);
    if (constraint === 'users_email_key') throw userErrors.emailTaken();
    if (constraint === 'users_badge_code_key') throw userErrors.badgeTaken();
  }
  throw e;
}

export async function listAccounts(db: Db): Promise<UserRow[]> {
  return (await listUsers(db)).map(toUserRow);
}

export async function createAccount(
  ctx: UsersContext,
  input: z.input<typeof createUserSchema>,
): Promise<UserRow> {
  const v = createUserSchema.parse(input);
  const passwordHash = v.password ? await hashSecret(v.password, ctx.bcryptCost) : null;
  const pinHash = v.badgeCode && v.pin ? await hashSecret(v.pin, ctx.bcryptCost) : null;
  const username = v.username.toLowerCase();
  const { user, token } = await ctx.db
    .transaction(async (tx) => {
      const created = await insertUser(tx, {
        username,
        displayName: v.displayName,
        email: v.email ?? null,
        role: v.role,
        passwordHash,
        badgeCode: v.badgeCode ? normaliseBadgeCode(v.badgeCode) : null,
        pinHash,
      });
      await insertAudit(tx, {
        actorId: ctx.actor.id,
        actorName: ctx.actor.displayName,
        action: 'users.created',
        subjectType: 'user',
        subjectId: created.id,
        after: auditView(created),
        ip: ctx.ip,
      });
      const token = v.sendInvite ? await issueLinkToken(tx, created.id, 'invite', ctx.clock()) : null;
      return { user: created, token };
    })
    .catch((e: unknown) => mapUniqueViolation(e, username));
  if (token && user.email) {
    await ctx.mailer.send({
      to: user.email,
      subject: 'You are invited to Phasewright',
      text: [
        `Hello ${user.displayName},`,
        '',
        `${ctx.actor.displayName} created a Phasewright account for you (user name: ${user.username}).`,
        `Choose your password within ${INVITE_TTL_HOURS / 24} days here:`,
        `${ctx.publicUrl}/set-password?token=${token}`,
      ].join('\n'),
    });
  }
  return toUserRow(user);
}

export async function updateAccount(
  ctx: UsersContext,
  id: string,
  input: z.input<typeof updateUserSchema>,
): Promise<UserRow> {
  const v = updateUserSchema.parse(input);
  const pinHash = v.pin ? await hashSecret(v.pin, ctx.bcryptCost) : undefined;
  const updated = await ctx.db
    .transaction(async (tx) => {
      const [before] = await tx.select().from(users).where(eq(users.id, id)).for('update');
      if (!before) throw userErrors.notFound();
      const roleChanges = v.role !== undefined && v.role !== before.role;
      const disabling = v.disabled === true && !before.disabled;
      if ((roleChanges || disabling) && !v.reason) throw userErrors.reasonRequired();
      if (before.role === 'admin' && !before.disabled && ((roleChanges && v.role !== 'admin') || disabling)) {
        const [{ n }] = await tx
          .select({ n: sql<number>`count(*)::int` })
          .from(users)
          .where(and(eq(users.role, 'admin'), eq(users.disabled, false), ne(users.id, id)));
        if (n === 0) throw userErrors.lastAdmin();
      }
      const badgeCleared = v.badgeCode === '';
      const after = await updateUser(tx, id, {
        displayName: v.displayName,
        email: v.email === undefined ? undefined : v.email,
        role: v.role,
        disabled: v.disabled,
        badgeCode:
          v.badgeCode === undefined ? undefined : badgeCleared ? null : normaliseBadgeCode(v.badgeCode),
        pinHash: badgeCleared ? null : pinHash,
        // A role change or disabling ends the person's open sessions at once.
        tokenVersion: roleChanges || disabling ? sql`${users.tokenVersion} + 1` : undefined,
      });
      await insertAudit(tx, {
        actorId: ctx.actor.id,
        actorName: ctx.actor.displayName,
        action: disabling ? 'users.disabled' : roleChanges ? 'users.role_changed' : 'users.updated',
        subjectType: 'user',
        subjectId: id,
        reason: v.reason ?? null,
        before: auditView(before),
        after: auditView(after!),
        ip: ctx.ip,
      });
      return after!;
    })
    .catch((e: unknown) => mapUniqueViolation(e, ''));
  return toUserRow(updated);
}

export async function unlockAccount(ctx: UsersContext, id: string): Promise<UserRow> {
  const before = await findUserById(ctx.db, id);
  if (!before) throw userErrors.notFound();
  const after = await updateUser(ctx.db, id, { failedAttempts: 0, lockedUntil: null });
  await insertAudit(ctx.db, {
    actorId: ctx.actor.id,
    actorName: ctx.actor.displayName,
    action: 'users.unlocked',
    subjectType: 'user',
    subjectId: id,
    before: auditView(before),
    after: auditView(after!),
    ip: ctx.ip,
  });
  return toUserRow(after!);
}

export async function sendResetLink(ctx: UsersContext, id: string): Promise<void> {
  const user = await findUserById(ctx.db, id);
  if (!user) throw userErrors.notFound();
  if (!user.email) throw userErrors.noEmail();
  await requestPasswordReset(ctx.db, ctx.mailer, user, {
    now: ctx.clock(),
    publicUrl: ctx.publicUrl,
    ip: ctx.ip,
    actor: ctx.actor,
  });
}
