/**
 * Each role's first screens after the seed, with the demo pilot processed: screenshots for a person to look at
 * (written to <data dir>/screenshots/first-*.png), that the collaborator sees released pilot samples, and that
 * every result view shows the research-use caution on screen and in print.
 */
import { describe, expect } from 'vitest';
import type { Page } from 'playwright-core';
import { eq } from 'drizzle-orm';
import { signInAs, screenshot, islandsReady } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD, type DemoRole } from '../support/demo';
import { fields, samples, studies } from '../../src/lib/db/schema';
import { PILOT_STUDY_NAME } from '../../scripts/seedPilot';
import { test, it } from '../support/fixtures';

let studyId: string;
let sampleId: string;
let linkedFieldId: string;

test.beforeAll(async ({ db }) => {
  const [study] = await db.select().from(studies).where(eq(studies.name, PILOT_STUDY_NAME));
  studyId = study.id;
  const rows = await db.select({ id: samples.id, code: samples.code }).from(samples).where(eq(samples.studyId, studyId));
  sampleId = rows.find((r) => r.code === 'PDAC-01')!.id;
  const hc5 = rows.find((r) => r.code === 'HC-05')!.id;
  const f = await db.select({ id: fields.id, status: fields.status }).from(fields).where(eq(fields.sampleId, hc5));
  linkedFieldId = f.find((x) => x.status === 'linked')!.id;
});

/** The caution is on the page and stays visible when printed. */
async function expectCaution(page: Page, what: string) {
  const caution = page.getByTestId('research-caution').first();
  await expect(caution.isVisible(), what).resolves.toBe(true);
  expect(await caution.textContent(), what).toMatch(/Research use only\.\s+Not for diagnosis or treatment decisions\./);
  await page.emulateMedia({ media: 'print' });
  await expect(caution.isVisible(), `${what} (print)`).resolves.toBe(true);
  await page.emulateMedia({ media: 'screen' });
}

async function visit(page: Page, role: DemoRole, path: string, name: string, caution: boolean) {
  await page.goto(`${APP_URL}${path}`);
  // the study page's lower islands hydrate only when scrolled to: wait for the ones in view there
  if (path.startsWith('/studies/') && !path.endsWith('/compare')) await page.waitForLoadState('networkidle');
  else await islandsReady(page);
  await screenshot(page, `first-${role}-${name}`);
  if (caution) await expectCaution(page, `${role} ${path}`);
}

describe('first screens of each role after the seed', () => {
  it('collaborator: released pilot samples, the sample view and the comparison, each with the caution', async ({ newPage }) => {
    const page = await newPage({ viewport: { width: 1280, height: 900 } });
    await signInAs(page, DEMO.collaborator, DEMO_PASSWORD);
    await visit(page, 'collaborator', '/', 'home', true);
    await visit(page, 'collaborator', '/results', 'results', true);
    // the released pilot samples are listed: at least 8 donors of the two groups
    const listed = await page.getByText(/^(PDAC|HC)-0\d$/).allTextContents();
    expect(new Set(listed).size).toBeGreaterThanOrEqual(8);
    await visit(page, 'collaborator', `/studies/${studyId}`, 'study', true);
    await visit(page, 'collaborator', `/results/${sampleId}`, 'sample', true);
    await visit(page, 'collaborator', `/studies/${studyId}/compare`, 'compare', true);
  });

  it('analyst: the queue with pilot fields at each step, and a linked field waiting for review with the caution', async ({ newPage }) => {
    const page = await newPage({ viewport: { width: 1280, height: 900 } });
    await signInAs(page, DEMO.analyst, DEMO_PASSWORD);
    await visit(page, 'analyst', '/', 'home', false);
    await visit(page, 'analyst', '/queue', 'queue', false);
    for (const title of ['Ready to register', 'Registered: ready to link', 'Linked: waiting for review']) {
      await expect(page.getByText(title).first().isVisible(), title).resolves.toBe(true);
    }
    await visit(page, 'analyst', `/fields/${linkedFieldId}`, 'linked-field', true);
  });

  it('biologist and admin: home and the pilot study page', async ({ newPage }) => {
    for (const role of ['biologist', 'admin'] as const) {
      const page = await newPage({ viewport: { width: 1280, height: 900 } });
      await signInAs(page, DEMO[role], DEMO_PASSWORD);
      await visit(page, role, '/', 'home', false);
      await visit(page, role, `/studies/${studyId}`, 'study', true);
    }
  });
});
