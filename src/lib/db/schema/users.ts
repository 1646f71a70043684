import { pgTable, pgEnum, uuid, text, timestamp, boolean, index, integer, bigint, varchar } from 'drizzle-orm/pg-core';

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
  /**
   * Every session cookie carries the version it was issued under; sign-out, a password change, a role change
   * and deactivation raise it, which ends every existing session of the person at once.
   */
  sessionVersion: integer().notNull().default(0),
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

/**
 * Counters of the sign-in and reset limits (rate-limiter-flexible's PostgreSQL store, in its own table layout:
 * key, points, expire in ms since epoch). Expired rows are pruned by the limiter every 5 minutes.
 */
export const rateLimits = pgTable('rate_limits', {
  key: varchar({ length: 255 }).primaryKey(),
  points: integer().notNull().default(0),
  expire: bigint({ mode: 'number' }),
});
