import type { Db } from './db/client';
import { auditLog } from './db/schema';

/**
 * Every action the app writes to the audit log, in the order the admin's filter lists them. The writers take
 * their action from this list (via {@link AuditAction}) and the audit page builds its filter from it, so the two
 * cannot drift apart.
 */
export const AUDIT_ACTIONS = [
  'sign_in.succeeded', 'sign_in.failed', 'sign_in.blocked',
  'user.invited', 'user.password_set', 'user.password_reset_requested', 'user.role_changed', 'user.deactivated',
  'study.created', 'membership.changed', 'panel.changed',
  'sample.created', 'field.uploaded', 'field.removed', 'field.detection_changed',
  'registration.saved', 'field.approved', 'field.sent_back', 'sample.released',
] as const;

/** One audit action; see {@link AUDIT_ACTIONS}. */
export type AuditAction = (typeof AUDIT_ACTIONS)[number];

/** Whether a string names an audit action (for checking a filter taken from a URL). */
export function isAuditAction(s: string): s is AuditAction {
  return (AUDIT_ACTIONS as readonly string[]).includes(s);
}

/** Appends one audit entry. Never throws into the caller: a failed audit write is logged. */
export async function audit(
  db: Db,
  entry: { action: AuditAction; actorId?: string | null; actorEmail?: string | null; targetType?: string; targetId?: string; ip?: string | null; details?: Record<string, unknown> },
) {
  try {
    await db.insert(auditLog).values({ ...entry, details: entry.details ?? {} });
  } catch (err) {
    console.error('[audit] could not record', entry.action, (err as Error).message);
  }
}
