/**
 * Where to go after signing in: `next` read as a URL relative to the app's own origin, kept only when it stays
 * on that origin. So `/\evil.test` (browsers read the backslash as a slash), `//evil.test`, `https://evil.test`
 * and `javascript:` all become `/`.
 *
 * @param raw - the `next` query value
 * @param origin - the app's origin
 * @returns a path (with query and hash) on the app's origin
 */
export function safeNext(raw: string | null, origin: string): string {
  if (!raw || !raw.startsWith('/')) return '/';
  let url: URL;
  try {
    url = new URL(raw, origin);
  } catch {
    return '/';
  }
  if (url.origin !== origin) return '/';
  const path = url.pathname + url.search + url.hash;
  // the resolved path must itself read the same way again (no scheme-relative or backslash start)
  return /^\/(?![/\\])/.test(path) ? path : '/';
}
