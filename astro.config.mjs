// @ts-check
import { defineConfig } from 'astro/config';
import node from '@astrojs/node';
import react from '@astrojs/react';
import tailwindcss from '@tailwindcss/vite';
import auth from 'auth-astro';

const allowedHosts = ['127.0.0.1', 'localhost', ...(process.env.ALLOWED_HOSTS ?? '').split(',').map((h) => h.trim()).filter(Boolean)];

export default defineConfig({
  output: 'server',
  // A separate build folder lets several checkouts' test runs build side by side.
  outDir: process.env.HEIGHTLIGHT_OUT_DIR ?? './dist',
  adapter: node({ mode: 'standalone' }),
  integrations: [react(), auth()],
  // Cross-site form posts are refused (Astro's origin check); it is the default, stated here on purpose.
  // Host names the app answers to; Astro trusts the Host header only for these. Add the production
  // host name with ALLOWED_HOSTS (comma-separated) at build time.
  security: { checkOrigin: true, allowedDomains: allowedHosts.map((hostname) => ({ hostname })) },
  server: { host: '127.0.0.1' },
  vite: {
    plugins: [tailwindcss()],
    ssr: { external: ['sharp', '@node-rs/argon2', 'pg', 'pg-boss', 's3rver', 'smtp-server', 'geotiff', 'utif'] },
  },
});
