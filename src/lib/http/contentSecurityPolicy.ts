/**
 * The Content-Security-Policy of every reply. Scripts: 'self' plus the SHA-256 hash of each inline script the page
 * carries (Astro's island loader and its small processed scripts are inline), and of each inline event-handler
 * attribute under 'unsafe-hashes'; never 'unsafe-inline' (CSP Level 3, "hash-source"; docs/references.md §11).
 * Why own code: Astro 5's CSP support is experimental and also hashes styles, which would block the style
 * attributes React renders; here only scripts are hashed, from the HTML actually sent.
 */
import { createHash } from 'node:crypto';

const hash = (text: string) => `'sha256-${createHash('sha256').update(text, 'utf8').digest('base64')}'`;

const decodeAttr = (v: string) =>
  v.replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&amp;/g, '&');

/**
 * The script sources an HTML page needs: the hashes of its inline scripts and of its inline event handlers.
 *
 * @param html - the page as sent
 * @returns source expressions for script-src (empty when the page has no inline script)
 */
export function inlineScriptSources(html: string): string[] {
  const scripts = new Set<string>();
  for (const m of html.matchAll(/<script\b([^>]*)>([\s\S]*?)<\/script\s*>/gi)) {
    if (/\ssrc\s*=/i.test(m[1])) continue;
    scripts.add(hash(m[2]));
  }
  const handlers = new Set<string>();
  for (const m of html.matchAll(/<[a-z][^>]*?\son[a-z]+\s*=\s*"([^"]*)"/gi)) handlers.add(hash(decodeAttr(m[1])));
  return [...scripts, ...(handlers.size ? ["'unsafe-hashes'", ...handlers] : [])];
}

/**
 * @param connectSrc - the object store's address as browsers reach it (presigned uploads)
 * @param scriptSources - extra script sources (hashes) of the page, if it is one
 * @returns the policy
 */
export function contentSecurityPolicy(connectSrc: string, scriptSources: readonly string[] = []): string {
  return [
    "default-src 'self'",
    ['script-src', "'self'", ...scriptSources].join(' '),
    // React and Tailwind set style attributes; styles cannot run code
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    // presigned uploads go straight from the browser to the object store
    `connect-src 'self' ${connectSrc}`,
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join('; ');
}
