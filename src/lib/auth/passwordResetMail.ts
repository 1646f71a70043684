/**
 * Password-reset mail, sent from the job queue after the request has been answered: the reply is the same, and
 * takes as long, whether or not the address has an account (no token is made, no mail is built while the
 * person waits).
 */
import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { users } from '../db/schema';
import { issueToken } from './oneTimeLinks';
import { send, passwordResetMail } from '../mail';
import { audit } from '../audit';
import { getBoss } from '../jobs/boss';
import { QUEUES } from '../jobs/queues';

export interface ResetMailJob { email: string; ip: string }

/** Queues the reset mail for `email` (whether or not it has an account). */
export async function enqueuePasswordResetMail(databaseUrl: string, job: ResetMailJob): Promise<void> {
  const boss = await getBoss(databaseUrl);
  await boss.send(QUEUES.passwordResetMail, job, { retryLimit: 2 });
}

/**
 * The job: for an active account with a password, a new reset link (older ones stop working) by e-mail.
 *
 * @returns whether a mail went out
 */
export async function sendPasswordResetMail(db: Db, publicUrl: string, job: ResetMailJob): Promise<boolean> {
  const [user] = await db.select().from(users).where(eq(users.email, job.email));
  if (!user?.active || !user.passwordHash) return false;
  const token = await issueToken(db, user.id, 'reset');
  await send(passwordResetMail({ to: job.email, name: user.name, link: new URL(`/invite/${token}`, publicUrl).toString() }));
  await audit(db, { action: 'user.password_reset_requested', actorEmail: job.email, targetType: 'user', targetId: user.id, ip: job.ip });
  return true;
}
