import { randomBytes, createHash } from 'node:crypto';

/** A fresh one-time token (sent by e-mail) and the hash we store; the token itself is never stored. */
export function newOneTimeToken(): { token: string; tokenHash: string } {
  const token = randomBytes(32).toString('base64url');
  return { token, tokenHash: hashToken(token) };
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

/** Invitation and reset links are valid for 72 hours. */
export const ONE_TIME_TOKEN_TTL_MS = 72 * 60 * 60 * 1000;
