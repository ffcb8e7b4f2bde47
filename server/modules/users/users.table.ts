import { sql } from 'drizzle-orm';
import { boolean, integer, pgEnum, pgTable, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import { ROLES } from '#shared/schemas/roles';

export const roleEnum = pgEnum('role', ROLES);

/**
 * People who sign in. A person has a password, a badge + PIN (operators at a station), or both.
 * `tokenVersion` is carried in every session token: raising it revokes all of the person's sessions.
 * `failedAttempts` counts consecutive failed sign-ins; at the limit `lockedUntil` is set.
 */
export const users = pgTable(
  'users',
  {
    id: uuid().primaryKey().defaultRandom(),
    username: text().notNull(),
    displayName: text().notNull(),
    email: text(),
    role: roleEnum().notNull(),
    passwordHash: text(),
    badgeCode: text(),
    pinHash: text(),
    disabled: boolean().notNull().default(false),
    failedAttempts: integer().notNull().default(0),
    lockedUntil: timestamp({ withTimezone: true }),
    tokenVersion: integer().notNull().default(0),
    lastSignInAt: timestamp({ withTimezone: true }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex('users_username_key').on(t.username),
    uniqueIndex('users_email_key').on(sql`lower(${t.email})`),
    uniqueIndex('users_badge_code_key').on(sql`upper(${t.badgeCode})`),
  ],
);

export type UserRecord = typeof users.$inferSelect;
