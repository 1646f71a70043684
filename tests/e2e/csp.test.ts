/**
 * The app's own pages run under its Content-Security-Policy without a single violation: sign-in,
 * studies, a study, a processed field with the viewer, and the upload page, in Debian's Chromium.
 */
import { describe, expect } from 'vitest';
import type { Page } from 'playwright-core';
import { eq } from 'drizzle-orm';
import { signInAs } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { fields, samples } from '../../src/lib/db/schema';
import { test, it } from '../support/fixtures';

let studyId = '';
let fieldId = '';

test.beforeAll(async ({ db }) => {
  // a processed demo field (the worker ingests them at start-up)
  const until = Date.now() + 60_000;
  while (Date.now() < until && !fieldId) {
    const [row] = await db.select({ id: fields.id, studyId: samples.studyId }).from(fields).innerJoin(samples, eq(samples.id, fields.sampleId))
      .where(eq(fields.status, 'ready')).limit(1);
    if (row) ({ id: fieldId, studyId } = row);
    else await new Promise((r) => setTimeout(r, 1000));
  }
});

/** Collects CSP reports from the console and from the page's securitypolicyviolation events. */
async function watch(page: Page) {
  const violations: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error' && /Content Security Policy|Refused to/i.test(m.text())) violations.push(`${new URL(page.url()).pathname}: ${m.text()}`);
  });
  await page.addInitScript(() => {
    document.addEventListener('securitypolicyviolation', (e) => console.error(`Refused to load (Content Security Policy ${e.violatedDirective}): ${e.blockedURI}`));
  });
  return violations;
}

describe('Content-Security-Policy in Chromium', () => {
  it('the app pages produce no CSP violation', async ({ page }) => {
    expect(fieldId, 'a processed demo field').not.toBe('');
    const violations = await watch(page);
    const seen: string[] = [];
    page.on('response', (r) => { if (r.request().resourceType() === 'document') seen.push(new URL(r.url()).pathname); });

    await signInAs(page, DEMO.biologist, DEMO_PASSWORD);
    for (const path of ['/', `/studies/${studyId}`, `/fields/${fieldId}`, '/upload']) {
      const res = await page.goto(`${APP_URL}${path}`, { waitUntil: 'networkidle' });
      expect(res?.status(), path).toBe(200);
      expect(res?.headers()['content-security-policy']).toContain("frame-ancestors 'none'");
      // scripts: self and the hashes of the page's own inline scripts, never 'unsafe-inline' (docs/security.md)
      const scriptSrc = res!.headers()['content-security-policy'].split(';').find((d) => d.trim().startsWith('script-src'))!;
      expect(scriptSrc, path).not.toContain("'unsafe-inline'");
    }
    // the viewer drew its tiles (canvas or images from the tile route)
    await page.goto(`${APP_URL}/fields/${fieldId}`, { waitUntil: 'networkidle' });
    const tiles = await page.evaluate(() => performance.getEntriesByType('resource').filter((e) => e.name.includes('/tiles/')).length);
    expect(tiles).toBeGreaterThan(0);
    expect(seen).toContain('/signin');
    expect(violations).toEqual([]);
  });
});
