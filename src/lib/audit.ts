import type { Db } from './db/client';
import { auditLog } from './db/schema';

export type AuditAction =
  | 'sign_in.succeeded' | 'sign_in.failed' | 'sign_in.blocked'
  | 'user.invited' | 'user.password_set' | 'user.password_reset_requested' | 'user.role_changed' | 'user.deactivated'
  | 'study.created' | 'membership.changed' | 'panel.changed'
  | 'sample.created' | 'field.uploaded' | 'field.upload_failed'
  | 'registration.saved' | 'field.approved' | 'field.sent_back' | 'sample.released';

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
