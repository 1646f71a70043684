import { pgTable, uuid, text, timestamp, jsonb, bigserial, index } from 'drizzle-orm/pg-core';
import { users } from './users';

/** Append-only record of security-relevant actions (sign-ins, uploads, saves, approvals, releases, roles). */
export const auditLog = pgTable(
  'audit_log',
  {
    id: bigserial({ mode: 'number' }).primaryKey(),
    at: timestamp({ withTimezone: true }).notNull().defaultNow(),
    actorId: uuid().references(() => users.id, { onDelete: 'set null' }),
    actorEmail: text(),
    action: text().notNull(),
    targetType: text(),
    targetId: text(),
    ip: text(),
    details: jsonb().$type<Record<string, unknown>>().notNull().default({}),
  },
  (t) => [index().on(t.at), index().on(t.action, t.at), index().on(t.actorId)],
);
