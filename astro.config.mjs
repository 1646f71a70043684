// @ts-check
import { defineConfig } from 'astro/config';
import node from '@astrojs/node';
import react from '@astrojs/react';
import tailwindcss from '@tailwindcss/vite';
import auth from 'auth-astro';
import { fileURLToPath } from 'node:url';

// The built server checks its configuration before it listens (src/lib/config.ts): production refuses to
// start without its secrets, with the message, instead of failing at the first request. Astro loads the
// middleware and pages lazily, so the check goes into the server entry itself.
const configModule = fileURLToPath(new URL('./src/lib/config.ts', import.meta.url));
// The client address comes from the socket (or a configured trusted proxy) from the very first request on:
// src/lib/http/peerAddress.ts wraps the web server's request event, so it is installed here too.
const peerAddressModule = fileURLToPath(new URL('./src/lib/http/peerAddress.ts', import.meta.url));
const checkConfigAtStart = {
  name: 'heightlight:check-config-at-start',
  /** @param {string} code @param {string} id */
  transform(code, id) {
    if (id !== '\0@astrojs-ssr-virtual-entry') return null;
    const check = `import { config as checkedConfig } from ${JSON.stringify(configModule)};
import { installPeerAddressGuard } from ${JSON.stringify(peerAddressModule)};
try { checkedConfig(); } catch (e) { console.error(e instanceof Error ? e.message : e); process.exit(1); }
installPeerAddressGuard(checkedConfig().TRUSTED_PROXIES);
`;
    return { code: check + code, map: null };
  },
};

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
    plugins: [tailwindcss(), checkConfigAtStart],
    ssr: { external: ['sharp', '@node-rs/argon2', 'pg', 'pg-boss', 's3rver', 'smtp-server', 'geotiff', 'utif'] },
  },
});
