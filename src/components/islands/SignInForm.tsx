import { useState, type FormEvent } from 'react';
import { signInWithPassword } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

const MESSAGES: Record<string, string> = {
  too_many_attempts: 'Too many failed sign-ins for this e-mail or network. Wait 15 minutes, or reset your password.',
  credentials: 'That e-mail and password do not match an active account.',
};

/** E-mail + password sign-in against Auth.js's credentials callback, with clear messages. */
export default function SignInForm({ next }: { next: string }) {
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    setBusy(true);
    setError(null);
    const form = new FormData(e.currentTarget);
    try {
      const url = new URL(await signInWithPassword(String(form.get('email')), String(form.get('password')), next), window.location.origin);
      const err = url.searchParams.get('error');
      if (err) {
        setError(MESSAGES[url.searchParams.get('code') ?? ''] ?? MESSAGES.credentials);
        setBusy(false);
        return;
      }
      window.location.href = next;
    } catch (e) {
      setError(errorText(e, 'The server could not be reached. Check your connection and try again.'));
      setBusy(false);
    }
  }

  return (
    <form method="post" onSubmit={onSubmit} className="space-y-4" aria-label="Sign in">
      <div>
        <label className="field-label" htmlFor="email">E-mail</label>
        <input className="input" id="email" name="email" type="email" autoComplete="username" required />
      </div>
      <div>
        <label className="field-label" htmlFor="password">Password</label>
        <input className="input" id="password" name="password" type="password" autoComplete="current-password" required />
      </div>
      {error && <p className="notice notice-error" role="alert">{error}</p>}
      <button className="btn w-full justify-center" type="submit" disabled={busy}>{busy ? 'Signing in…' : 'Sign in'}</button>
    </form>
  );
}
