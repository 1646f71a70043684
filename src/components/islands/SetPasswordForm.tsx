import { useState, type FormEvent } from 'react';
import { MIN_PASSWORD_LENGTH_CLIENT } from '../../lib/schemas/limits';
import { acceptInvitation } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

/** Sets a password from an invitation or reset link. */
export default function SetPasswordForm({ token }: { token: string }) {
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    const password = String(form.get('password'));
    if (password !== String(form.get('confirm'))) return setError('The two passwords differ.');
    if (password.length < MIN_PASSWORD_LENGTH_CLIENT) return setError(`Use at least ${MIN_PASSWORD_LENGTH_CLIENT} characters.`);
    setError(null);
    try {
      setDone((await acceptInvitation(token, password)).email);
    } catch (e) {
      setError(errorText(e));
    }
  }

  if (done) {
    return (
      <div className="space-y-3">
        <p className="notice notice-ok" role="status">Your password is set for {done}.</p>
        <a className="btn" href="/signin">Go to sign-in</a>
      </div>
    );
  }
  return (
    <form method="post" onSubmit={onSubmit} className="space-y-4" aria-label="Choose a password">
      <div>
        <label className="field-label" htmlFor="password">New password (at least {MIN_PASSWORD_LENGTH_CLIENT} characters)</label>
        <input className="input" id="password" name="password" type="password" autoComplete="new-password" required />
      </div>
      <div>
        <label className="field-label" htmlFor="confirm">Repeat it</label>
        <input className="input" id="confirm" name="confirm" type="password" autoComplete="new-password" required />
      </div>
      {error && <p className="notice notice-error" role="alert">{error}</p>}
      <button className="btn" type="submit">Set password</button>
    </form>
  );
}
