// Type-only stand-in for auth-astro/server (see auth-astro.d.ts for why).
export { getSession } from 'auth-astro-server-typed';
