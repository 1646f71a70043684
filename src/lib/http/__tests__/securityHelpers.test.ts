import { describe, it, expect } from 'vitest';
import { inlineScriptSources, contentSecurityPolicy } from '../contentSecurityPolicy';
import { jsonDepth } from '../parse';
import { safeNext } from '../safeNext';
import { resolveClientAddress } from '../peerAddress';
import { isSameOriginRequest } from '../sameOrigin';

describe('inlineScriptSources', () => {
  it('hashes inline scripts as the CSP spec example does, skips external ones, and hashes handlers under unsafe-hashes', () => {
    // W3C CSP Level 3, hash-source example: alert('Hello, world.'); → sha256-qznLcsROx4GACP2dm0UCKCzCG+HiZ1guq6ZZDob/Tng=
    const html = `<head><script>alert('Hello, world.');</script><script type="module" src="/_astro/a.js"></script></head>
      <button onclick="window.print()">Print</button>`;
    const sources = inlineScriptSources(html);
    expect(sources[0]).toBe("'sha256-qznLcsROx4GACP2dm0UCKCzCG+HiZ1guq6ZZDob/Tng='");
    expect(sources).toHaveLength(3);
    expect(sources[1]).toBe("'unsafe-hashes'");
    const csp = contentSecurityPolicy('http://127.0.0.1:1', sources);
    expect(csp).toMatch(/script-src 'self' 'sha256-qznL/);
    expect(csp.split(';').find((d) => d.trim().startsWith('script-src'))).not.toContain("'unsafe-inline'");
  });
});

describe('jsonDepth', () => {
  it('counts nesting outside strings only and stops past the limit', () => {
    expect(jsonDepth('{"a":[1,{"b":"[[[["}]}')).toBe(3);
    expect(jsonDepth('"\\"[[["')).toBe(0);
    expect(jsonDepth('['.repeat(100_000), 32)).toBe(33);
  });
});

describe('safeNext', () => {
  it('keeps only paths on the app origin', () => {
    const o = 'http://127.0.0.1:4321';
    for (const bad of ['/\\evil.test', '//evil.test', 'https://evil.test', 'javascript:alert(1)', '/\\/evil.test', '', null]) expect(safeNext(bad, o)).toBe('/');
    expect(safeNext('/studies/1?x=2#t', o)).toBe('/studies/1?x=2#t');
  });
});

describe('resolveClientAddress', () => {
  it('believes X-Forwarded-For only from a trusted proxy, walking from the right', () => {
    expect(resolveClientAddress('127.0.0.1', '203.0.113.9', [])).toBe('127.0.0.1');
    expect(resolveClientAddress('::ffff:10.0.0.2', '203.0.113.9, 198.51.100.4', ['10.0.0.2'])).toBe('198.51.100.4');
    expect(resolveClientAddress('10.0.0.2', '203.0.113.9, 10.0.0.3', ['10.0.0.2', '10.0.0.3'])).toBe('203.0.113.9');
    expect(resolveClientAddress('192.0.2.1', '203.0.113.9', ['10.0.0.2'])).toBe('192.0.2.1');
  });
});

describe('isSameOriginRequest', () => {
  const req = (method: string, headers: Record<string, string>) => new Request('http://127.0.0.1:4321/api/x', { method, headers });
  it('lets reads through and checks Origin, or Sec-Fetch-Site without it, on every change', () => {
    const own = ['http://127.0.0.1:4321'];
    expect(isSameOriginRequest(req('GET', { origin: 'http://evil.test' }), own)).toBe(true);
    expect(isSameOriginRequest(req('POST', { origin: 'http://127.0.0.1:4321' }), own)).toBe(true);
    expect(isSameOriginRequest(req('DELETE', { origin: 'http://evil.test' }), own)).toBe(false);
    expect(isSameOriginRequest(req('PATCH', {}), own)).toBe(false);
    expect(isSameOriginRequest(req('PUT', { 'sec-fetch-site': 'same-origin' }), own)).toBe(true);
    expect(isSameOriginRequest(req('PUT', { 'sec-fetch-site': 'cross-site' }), own)).toBe(false);
  });
});
