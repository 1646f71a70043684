/**
 * Security headers on pages and API replies, the session cookie's flags, and the refusal of a
 * cross-site form POST (Astro's origin check, astro.config.mjs security.checkOrigin).
 */
import { describe, expect } from 'vitest';
import { AppClient, APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { test, it } from '../support/fixtures';

function expectSecurityHeaders(res: Response, what: string) {
  const csp = res.headers.get('content-security-policy') ?? '';
  expect(csp, what).toContain("frame-ancestors 'none'");
  expect(csp, what).toContain("default-src 'self'");
  expect(csp, what).toContain("object-src 'none'");
  expect(res.headers.get('x-content-type-options'), what).toBe('nosniff');
}

describe('security headers', () => {
  it('pages carry CSP with frame-ancestors none and nosniff, signed in or not', async ({ signedIn }) => {
    const anon = new AppClient();
    expectSecurityHeaders(await anon.fetch('/signin'), 'GET /signin');
    expectSecurityHeaders(await anon.fetch('/'), 'GET / (redirect to sign-in)');
    const bio = await signedIn('biologist');
    const home = await bio.fetch('/');
    expect(home.status).toBe(200);
    expectSecurityHeaders(home, 'GET / signed in');
    expectSecurityHeaders(await bio.fetch('/upload'), 'GET /upload');
  });

  it('API replies carry them too, successes and errors alike', async ({ signedIn }) => {
    const bio = await signedIn('biologist');
    const me = await bio.fetch('/api/me');
    expect(me.status).toBe(200);
    expectSecurityHeaders(me, 'GET /api/me');
    const anon = await new AppClient().fetch('/api/me');
    expect(anon.status).toBe(401);
    expectSecurityHeaders(anon, 'GET /api/me anonymous');
    const bad = await bio.json('/api/studies/not-a-uuid/samples', 'POST', {});
    expect(bad.status).toBeGreaterThanOrEqual(400);
    expectSecurityHeaders(bad, 'POST with a bad id');
  });

  it('the session cookie is HttpOnly and SameSite=Lax', async () => {
    const first = await fetch(`${APP_URL}/api/auth/csrf`);
    const csrfCookies = first.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
    const { csrfToken } = await first.json();
    const res = await fetch(`${APP_URL}/api/auth/callback/credentials`, {
      method: 'POST',
      redirect: 'manual',
      headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-auth-return-redirect': '1', cookie: csrfCookies, origin: APP_URL },
      body: new URLSearchParams({ email: DEMO.analyst, password: DEMO_PASSWORD, csrfToken, callbackUrl: `${APP_URL}/` }),
    });
    const session = res.headers.getSetCookie().find((c) => /session-token=/.test(c));
    expect(session, 'a session cookie is set').toBeTruthy();
    expect(session).toMatch(/;\s*HttpOnly/i);
    expect(session).toMatch(/;\s*SameSite=Lax/i);
    expect(session).toMatch(/;\s*Path=\//i);
  });

  it('refuses a cross-site form POST with 403 and changes nothing', async ({ signedIn }) => {
    const admin = await signedIn('admin');
    const before = (await (await admin.fetch('/api/studies')).json()).studies.length;
    const name = `Cross-site ${Date.now()}`;
    const res = await admin.fetch('/api/studies', {
      method: 'POST',
      headers: { origin: 'http://evil.example', 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams({ name }),
    });
    expect(res.status).toBe(403);
    const multipart = new FormData();
    multipart.set('name', name);
    const res2 = await admin.fetch('/api/studies', { method: 'POST', headers: { origin: 'http://evil.example' }, body: multipart });
    expect(res2.status).toBe(403);
    const after = (await (await admin.fetch('/api/studies')).json()).studies;
    expect(after.length).toBe(before);
    expect(after.some((s: { name: string }) => s.name === name)).toBe(false);
  });
});
