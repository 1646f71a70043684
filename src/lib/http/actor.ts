import type { APIContext } from 'astro';
import { clientAddress } from './context';

/** Who does an operation, as the audit log records it: the signed-in person and the address the request came from. */
export interface Actor {
  id: string;
  email: string;
  /** The caller's address as the middleware worked it out (see `clientAddress`). */
  ip: string;
}

/** The actor of a request: the person the guard let through, and the request's address. */
export function actor(user: { id: string; email: string }, ctx: APIContext): Actor {
  return { id: user.id, email: user.email, ip: clientAddress(ctx) };
}
