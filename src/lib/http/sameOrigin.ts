/**
 * Strict same-origin check for state-changing requests (POST, PUT, PATCH, DELETE), whatever their content type:
 * Astro's own check (security.checkOrigin) covers only form posts, and a JSON request from another site must be
 * refused too (OWASP CSRF Prevention Cheat Sheet, "verifying origin with standard headers"; docs/references.md §11).
 * Browsers send Origin on every such request; when it is absent, Sec-Fetch-Site must say same-origin.
 */
const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * @param request - the request
 * @param ownOrigins - the origins the app is served at (the request URL's and the configured public one)
 * @returns true when the request may change state
 */
export function isSameOriginRequest(request: Request, ownOrigins: readonly string[]): boolean {
  if (SAFE.has(request.method)) return true;
  const origin = request.headers.get('origin');
  if (origin) return ownOrigins.includes(origin);
  return request.headers.get('sec-fetch-site') === 'same-origin';
}
