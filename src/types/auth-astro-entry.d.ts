// Type-only stand-in for the auth-astro package entry (see auth-astro.d.ts for why).
export { defineConfig, default } from 'auth-astro-typed';
