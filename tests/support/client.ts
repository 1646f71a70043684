/**
 * A small HTTP client for integration tests against the running app: keeps cookies and signs in
 * through Auth.js's real credentials flow (the same requests the sign-in form makes).
 */
export const APP_URL = process.env.HEIGHTLIGHT_APP_URL ?? 'http://127.0.0.1:4399';

export class AppClient {
  private cookies = new Map<string, string>();
  constructor(readonly base = APP_URL) {}

  private store(res: Response) {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const i = pair.indexOf('=');
      const name = pair.slice(0, i);
      const value = pair.slice(i + 1);
      if (value === '' || /max-age=0|expires=thu, 01 jan 1970/i.test(c)) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  cookieHeader() {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
  }

  async fetch(path: string, init: RequestInit = {}): Promise<Response> {
    const headers = new Headers(init.headers);
    if (this.cookies.size) headers.set('cookie', this.cookieHeader());
    // Same-origin requests, as a browser sends them (Astro's origin check reads this).
    if (init.method && init.method !== 'GET' && !headers.has('origin')) headers.set('origin', this.base);
    const res = await fetch(this.base + path, { ...init, headers, redirect: 'manual' });
    this.store(res);
    return res;
  }

  json(path: string, method: string, body?: unknown) {
    return this.fetch(path, { method, headers: { 'content-type': 'application/json' }, body: body === undefined ? undefined : JSON.stringify(body) });
  }

  /** Signs in; returns the error code from Auth.js's redirect URL, or null on success. */
  async signIn(email: string, password: string): Promise<string | null> {
    const { csrfToken } = await (await this.fetch('/api/auth/csrf')).json();
    const res = await this.fetch('/api/auth/callback/credentials', {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-auth-return-redirect': '1' },
      body: new URLSearchParams({ email, password, csrfToken, callbackUrl: this.base + '/' }),
    });
    const data = await res.json();
    const url = new URL(data.url);
    return url.searchParams.get('error') ? (url.searchParams.get('code') ?? url.searchParams.get('error')) : null;
  }
}

export async function signedIn(email: string, password: string) {
  const c = new AppClient();
  const err = await c.signIn(email, password);
  if (err) throw new Error(`sign-in of ${email} failed: ${err}`);
  return c;
}
