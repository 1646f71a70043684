/**
 * The detection-settings card on the field page in Chromium: an analyst sees the settings used (with units),
 * lowers the bead cut-off below the 200 nm beads and detects again; the status card shows the job and the page
 * then shows the beads as fiducial candidates. A biologist sees the settings read-only.
 */
import { describe, expect, afterAll } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '../../src/lib/db/client';
import { fields, samples } from '../../src/lib/db/schema';
import { islandsReady, screenshot, signInAs } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { BEAD_FIELD, insertBeadField } from '../support/beadField';
import { test, it } from '../support/fixtures';

let db: Db;
let sampleId: string;
let fieldId: string;

async function processed(timeoutMs = 90_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const [f] = await db.select().from(fields).where(eq(fields.id, fieldId));
    if (f.status === 'failed') throw new Error(`ingestion failed: ${f.failureReason}`);
    if (f.status !== 'ingesting' && (f.progress?.fraction ?? 1) >= 1) return f;
    await new Promise((r) => setTimeout(r, 400));
  }
  throw new Error('the field was not processed in time');
}

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  db = fileDb;
  const [demo] = await db.select().from(samples).where(eq(samples.code, 'HCP-001'));
  const [s] = await db.insert(samples).values({ studyId: demo.studyId, code: `DETSET-E2E-${Date.now().toString(36)}` }).returning();
  sampleId = s.id;
  fieldId = await insertBeadField(db, sampleId, 'beads e2e');
  const biologist = await signedIn('biologist');
  expect((await biologist.fetch(`/api/fields/${fieldId}/retry`, { method: 'POST' })).status).toBe(202);
  await processed();
}, 150_000);

afterAll(async () => {
  if (sampleId) await db.delete(samples).where(eq(samples.id, sampleId));
});

describe('detection settings on the field page', () => {
  it('an analyst lowers the bead cut-off and detects again; the beads become fiducial candidates', async ({ page }) => {
    await signInAs(page, DEMO.analyst, DEMO_PASSWORD);
    await page.goto(`${APP_URL}/fields/${fieldId}`);
    await islandsReady(page);
    const card = page.getByTestId('detection-settings');
    await expect.poll(() => card.textContent()).toContain('automatic defaults');
    const before = (await card.textContent())!;
    expect(before).toContain('300 nm');
    expect(before).toContain(`${(9 * BEAD_FIELD.afmPixelNm ** 2).toLocaleString('en')} nm² (9 px)`);
    expect(before).toContain('0 fiducial candidates');
    expect(before).toContain('Linking must be re-run');

    await page.getByLabel('Bead cut-off height (nm)').fill('150');
    await page.getByRole('button', { name: 'Detect again', exact: true }).click();
    // the page reloads into the running job (the status card's progress bar), then into the result
    await page.waitForEvent('load', { timeout: 20_000 });
    await processed();
    // the status card reloads the page itself once the job is done: wait for that page, not a reload of our own
    // (which the card's reload would abort)
    let after = '';
    const until = Date.now() + 30_000;
    while (!after.includes("analyst's") && Date.now() < until) {
      try {
        await page.waitForLoadState('load');
        after = (await page.getByTestId('detection-settings').textContent({ timeout: 2000 })) ?? '';
      } catch {
        after = ''; // the page was navigating
      }
      if (!after.includes("analyst's")) await page.waitForTimeout(500);
    }
    await islandsReady(page);
    after = (await page.getByTestId('detection-settings').textContent())!;
    expect(after).toContain("analyst's");
    expect(after).toContain('150 nm');
    expect(after).toContain(`${BEAD_FIELD.nbBeads} fiducial candidates`);
    await screenshot(page, 'detection-settings-analyst');
  }, 150_000);

  it('a biologist sees the settings used without the form', async ({ page }) => {
    await signInAs(page, DEMO.biologist, DEMO_PASSWORD);
    await page.goto(`${APP_URL}/fields/${fieldId}`);
    await islandsReady(page);
    const card = page.getByTestId('detection-settings');
    expect(await card.textContent()).toContain('150 nm');
    expect(await page.getByRole('button', { name: 'Detect again', exact: true }).count()).toBe(0);
    expect(await page.getByRole('button', { name: 'Use defaults and detect again' }).count()).toBe(0);
  }, 60_000);
});
