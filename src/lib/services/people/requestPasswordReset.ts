import type { Db } from '../../db/client';
import { HttpError } from '../../http/errors';
import { config } from '../../config';
import { resetRequestVerdict } from '../../auth/rateLimit';
import { enqueuePasswordResetMail } from '../../auth/passwordResetMail';

/**
 * Asks for a reset link. The account lookup and the mail happen in the job queue afterwards, so the caller learns
 * nothing about whether the address has an account. Limited per address (429) and per e-mail (silently).
 * @throws HttpError 429 `too_many_requests` when this network asked too often
 */
export async function requestPasswordReset(db: Db, email: string, ip: string): Promise<void> {
  const verdict = await resetRequestVerdict(db, email, ip);
  if (!verdict.address.allowed) {
    throw new HttpError(429, 'too_many_requests', `Too many reset requests from this network. Wait ${Math.ceil(verdict.address.retryAfterS / 60)} minute(s) and try again.`);
  }
  if (verdict.mail) await enqueuePasswordResetMail(config().DATABASE_URL, { email, ip });
}
