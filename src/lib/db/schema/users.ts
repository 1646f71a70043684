import { pgTable, pgEnum, uuid, text, timestamp, boolean, index, bigserial } from 'drizzle-orm/pg-core';

export const roleEnum = pgEnum('role', ['admin', 'biologist', 'analyst', 'collaborator']);
export const tokenPurposeEnum = pgEnum('token_purpose', ['invite', 'reset']);

export const users = pgTable('users', {
  id: uuid().primaryKey().defaultRandom(),
  email: text().notNull().unique(),
  name: text().notNull(),
  role: roleEnum().notNull(),
  /** argon2id PHC string; null until an invited user sets a password. */
  passwordHash: text(),
  active: boolean().notNull().default(true),
  createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});

/** One-time links for invitations and password resets; only the SHA-256 of the token is kept. */
export const oneTimeTokens = pgTable(
  'one_time_tokens',
  {
    id: uuid().primaryKey().defaultRandom(),
    userId: uuid().notNull().references(() => users.id, { onDelete: 'cascade' }),
    purpose: tokenPurposeEnum().notNull(),
    tokenHash: text().notNull().unique(),
    expiresAt: timestamp({ withTimezone: true }).notNull(),
    usedAt: timestamp({ withTimezone: true }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.userId)],
);

/** Sign-in attempts, for rate limiting per e-mail and per address. */
export const signInAttempts = pgTable(
  'sign_in_attempts',
  {
    id: bigserial({ mode: 'number' }).primaryKey(),
    email: text().notNull(),
    ip: text().notNull(),
    succeeded: boolean().notNull(),
    at: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.email, t.at), index().on(t.ip, t.at)],
);
