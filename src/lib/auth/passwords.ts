import { hash, verify } from '@node-rs/argon2';

// argon2id (2 = Algorithm.Argon2id; the const enum cannot be imported under verbatimModuleSyntax) with the
// OWASP-recommended minimum (19 MiB, 2 passes, 1 lane; OWASP Password Storage Cheat Sheet).
const OPTIONS = { algorithm: 2, memoryCost: 19456, timeCost: 2, parallelism: 1 } as const;

export { MIN_PASSWORD_LENGTH_CLIENT as MIN_PASSWORD_LENGTH } from '../schemas/limits';

/** Hashes a password with argon2id; returns the PHC string. */
export function hashPassword(password: string): Promise<string> {
  return hash(password, OPTIONS);
}

/** Verifies a password against a PHC string; false for a malformed hash rather than throwing. */
export async function verifyPassword(phc: string, password: string): Promise<boolean> {
  try {
    return await verify(phc, password);
  } catch {
    return false;
  }
}
