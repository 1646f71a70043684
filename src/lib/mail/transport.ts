import nodemailer, { type Transporter } from 'nodemailer';

export interface MailSettings { host: string; port: number; secure: boolean; user?: string; pass?: string; from: string }
export interface OutgoingMail { to: string; subject: string; text: string; html: string }

let cached: { key: string; transport: Transporter } | undefined;

/** Sends one message over SMTP (the local sink in development, a relay in production). */
export async function sendMail(settings: MailSettings, mail: OutgoingMail) {
  const key = `${settings.host}:${settings.port}:${settings.user ?? ''}`;
  if (!cached || cached.key !== key) {
    cached = {
      key,
      transport: nodemailer.createTransport({
        host: settings.host,
        port: settings.port,
        secure: settings.secure,
        auth: settings.user ? { user: settings.user, pass: settings.pass } : undefined,
        // The local sink speaks plain SMTP on loopback.
        ignoreTLS: !settings.secure && settings.host === '127.0.0.1',
      }),
    };
  }
  await cached.transport.sendMail({ from: settings.from, ...mail });
}
