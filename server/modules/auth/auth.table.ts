import { pgEnum, pgTable, text, timestamp, uniqueIndex, uuid, index } from 'drizzle-orm/pg-core';
import { users } from '../users/users.table';

export const tokenPurposeEnum = pgEnum('token_purpose', ['invite', 'reset']);

/**
 * Single-use links sent by e-mail (invitations and password resets). Only the SHA-256 of the
 * token is stored; the token itself exists only in the e-mail.
 */
export const authTokens = pgTable(
  'auth_tokens',
  {
    id: uuid().primaryKey().defaultRandom(),
    userId: uuid()
      .notNull()
      .references(() => users.id),
    purpose: tokenPurposeEnum().notNull(),
    tokenHash: text().notNull(),
    expiresAt: timestamp({ withTimezone: true }).notNull(),
    usedAt: timestamp({ withTimezone: true }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('auth_tokens_hash_key').on(t.tokenHash), index('auth_tokens_user_idx').on(t.userId)],
);
