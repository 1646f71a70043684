import { hash, verify } from '@node-rs/argon2';
import { randomBytes } from 'node:crypto';

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

// made once per process when first needed; a verification against it always fails
let dummy: Promise<string> | undefined;

/**
 * Verifies `password` against a hash of a random secret (always false), costing what a real verification
 * costs: sign-in and reset for unknown accounts then take as long as for known ones.
 */
export async function verifyAgainstDummy(password: string): Promise<false> {
  dummy ??= hash(randomBytes(32).toString('base64url'), OPTIONS);
  await verifyPassword(await dummy, password);
  return false;
}
