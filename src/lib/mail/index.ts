import { config } from '../config';
import { sendMail, type OutgoingMail } from './transport';

/** Sends with the configured SMTP settings. */
export function send(mail: OutgoingMail) {
  const c = config();
  return sendMail({ host: c.SMTP_HOST, port: c.SMTP_PORT, secure: c.SMTP_SECURE, user: c.SMTP_USER, pass: c.SMTP_PASS, from: c.MAIL_FROM }, mail);
}
export { invitationMail, passwordResetMail } from './templates/oneTimeLink';
