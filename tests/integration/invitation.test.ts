import { describe, expect } from 'vitest';
import { AppClient, signedIn as signInWith } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { test, it } from '../support/fixtures';
import { waitForMail, linkIn } from '../support/mailSink';

const unique = () => `person-${Date.now()}-${Math.floor(Math.random() * 1e6)}@lab.example`;

describe('invitation by e-mail', () => {
  it('admin invites, the invitee reads the mail, sets a password once, and signs in with the invited role', async ({ signedIn }) => {
    const admin = await signedIn('admin');
    const email = unique();
    const res = await admin.json('/api/admin/invitations', 'POST', { email, name: 'Rosa Demo', role: 'analyst' });
    expect(res.status).toBe(201);

    const mail = await waitForMail(email, 'invitation');
    const { url, token } = linkIn(mail.text);
    expect(url.startsWith(process.env.HEIGHTLIGHT_APP_URL!)).toBe(true);

    // Before the password is set, the account cannot sign in.
    expect(await new AppClient().signIn(email, 'whatever-password')).not.toBeNull();

    const page = await new AppClient().fetch(new URL(url).pathname);
    expect(page.status).toBe(200);

    const anon = new AppClient();
    const accept = await anon.json('/api/invitations/accept', 'POST', { token, password: 'a-new-password-42' });
    expect(accept.status).toBe(200);
    expect((await accept.json()).email).toBe(email);

    // Single use.
    const again = await anon.json('/api/invitations/accept', 'POST', { token, password: 'another-password-42' });
    expect(again.status).toBe(400);
    expect((await again.json()).error).toBe('invalid_token');

    const invitee = await signInWith(email, 'a-new-password-42');
    const me = await (await invitee.fetch('/api/me')).json();
    expect(me.user.role).toBe('analyst');
    expect(me.user.email).toBe(email);
  });

  it('refuses a short password and a forged token without changing anything', async () => {
    const anon = new AppClient();
    const short = await anon.json('/api/invitations/accept', 'POST', { token: 'x'.repeat(43), password: 'short' });
    expect(short.status).toBe(400);
    expect((await short.json()).error).toBe('validation_failed');
    const forged = await anon.json('/api/invitations/accept', 'POST', { token: 'y'.repeat(43), password: 'long-enough-password' });
    expect(forged.status).toBe(400);
    expect((await forged.json()).error).toBe('invalid_token');
  });

  it('password reset sends a one-time link that replaces the password', async ({ signedIn }) => {
    const admin = await signedIn('admin');
    const email = unique();
    await admin.json('/api/admin/invitations', 'POST', { email, name: 'Reset Person', role: 'biologist' });
    const invite = linkIn((await waitForMail(email, 'invitation')).text);
    await new AppClient().json('/api/invitations/accept', 'POST', { token: invite.token, password: 'first-password-1' });

    const req = await new AppClient().json('/api/password-reset', 'POST', { email });
    expect(req.status).toBe(202);
    const reset = linkIn((await waitForMail(email, 'Reset', 60_000)).text);
    expect(reset.token).not.toBe(invite.token);
    expect((await new AppClient().json('/api/invitations/accept', 'POST', { token: reset.token, password: 'second-password-2' })).status).toBe(200);
    expect(await new AppClient().signIn(email, 'first-password-1')).not.toBeNull();
    expect(await new AppClient().signIn(email, 'second-password-2')).toBeNull();
  });

  it('answers a reset request for an unknown address the same way (no account probing)', async () => {
    const res = await new AppClient().json('/api/password-reset', 'POST', { email: unique() });
    expect(res.status).toBe(202);
  });
});

describe('sign-in rate limit', () => {
  // growing delays, not a lock (lib/auth/rateLimit.ts; more in security-auth.test.ts)
  it('makes an e-mail wait after 5 failures from one address, even with the right password', async ({ signedIn }) => {
    const admin = await signedIn('admin');
    const email = unique();
    await admin.json('/api/admin/invitations', 'POST', { email, name: 'Limit Person', role: 'biologist' });
    const { token } = linkIn((await waitForMail(email, 'invitation')).text);
    await new AppClient().json('/api/invitations/accept', 'POST', { token, password: 'right-password-9' });
    for (let i = 0; i < 6; i++) expect(await new AppClient().signIn(email, `wrong-${i}-password`)).toBe('credentials');
    expect(await new AppClient().signIn(email, 'right-password-9')).toBe('too_many_attempts');
    // Another person from the same address is not locked out by someone else's failures.
    expect(await new AppClient().signIn(DEMO.biologist, DEMO_PASSWORD)).toBeNull();
  });
});
