import type { OutgoingMail } from '../transport';

const escape = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

/** The invitation e-mail: a one-time link where the invitee chooses a password. */
export function invitationMail(p: { to: string; name: string; invitedBy: string; link: string; role: string }): OutgoingMail {
  const text = `Hello ${p.name},

${p.invitedBy} has invited you to Heightlight as ${p.role}.
Choose your password here (the link works once and expires in 72 hours):

${p.link}

If you did not expect this, ignore this message.`;
  return {
    to: p.to,
    subject: 'Your Heightlight invitation',
    text,
    html: `<p>Hello ${escape(p.name)},</p><p>${escape(p.invitedBy)} has invited you to Heightlight as ${escape(p.role)}.</p>
<p><a href="${escape(p.link)}">Choose your password</a> (the link works once and expires in 72 hours).</p>
<p>If you did not expect this, ignore this message.</p>`,
  };
}

/** The password-reset e-mail. */
export function passwordResetMail(p: { to: string; name: string; link: string }): OutgoingMail {
  const text = `Hello ${p.name},

Someone asked to reset your Heightlight password. Choose a new one here (the link works once and expires in 72 hours):

${p.link}

If it was not you, ignore this message: your password stays as it is.`;
  return {
    to: p.to,
    subject: 'Reset your Heightlight password',
    text,
    html: `<p>Hello ${escape(p.name)},</p><p>Someone asked to reset your Heightlight password.</p>
<p><a href="${escape(p.link)}">Choose a new password</a> (the link works once and expires in 72 hours).</p>
<p>If it was not you, ignore this message: your password stays as it is.</p>`,
  };
}
