/**
 * In Chromium: an analyst picks three bead pairs on the demo field by hand; from then on a click
 * proposes the partner, which is accepted (button, Enter), cancelled (Esc) or placed by hand. After
 * saving and a reload the same transform (on screen and from the API) and FRE are shown; a second
 * analyst (invited for this test) who started from the old version gets the conflict message.
 */
import { describe, expect } from 'vitest';
import type { Page } from 'playwright-core';
import { signInAs, screenshot, islandsReady } from '../support/browser';
import { APP_URL, AppClient } from '../support/client';
import { waitForMail, linkIn } from '../support/mailSink';
import { DEMO_STUDY_NAME } from '../../scripts/seed';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { ownDemoField } from '../support/demoField';
import { makeDemoPair } from '../../fixtures/demoScene';
import { DEMO_FIELDS } from '../../scripts/seedDemoFields';
import { applyAffine } from '../../src/lib/analysis/geometry';
import type { Affine } from '../../src/lib/analysis/types';
import { test, it } from '../support/fixtures';

let fieldId: string;
/** A second analyst of the demo study, invited through the admin API for this test. */
const secondAnalyst = { email: `analyst-two-${Date.now()}@lab.example`, password: 'second-analyst-pw-42' };
test.beforeAll(async ({ db, signedIn }) => {
  // a copy of HCP-001's field of its own: other tests register and release the seeded one
  fieldId = await ownDemoField(db, 'HCP-001', 'REG');
  const admin = await signedIn('admin');
  expect((await admin.json('/api/admin/invitations', 'POST', { email: secondAnalyst.email, name: 'Second Analyst', role: 'analyst' })).status).toBe(201);
  const { token } = linkIn((await waitForMail(secondAnalyst.email, 'invitation')).text);
  expect((await new AppClient().json('/api/invitations/accept', 'POST', { token, password: secondAnalyst.password })).status).toBe(200);
  const people: { id: string; email: string }[] = (await (await admin.fetch('/api/admin/users')).json()).users;
  const studies: { id: string; name: string }[] = (await (await admin.fetch('/api/studies')).json()).studies;
  const studyId = studies.find((st) => st.name === DEMO_STUDY_NAME)!.id;
  const userId = people.find((p) => p.email === secondAnalyst.email)!.id;
  expect((await admin.json(`/api/studies/${studyId}/members`, 'PUT', { userId, role: 'analyst' })).status).toBe(204);
});

/** Screen position of image pixel (x, y) in a viewer showing a w × h image fitted to its box (the viewer's home view). */
async function screenPoint(page: Page, testId: string, w: number, h: number, x: number, y: number) {
  const box = (await page.getByTestId(testId).boundingBox())!;
  const s = Math.min(box.width / w, box.height / h);
  return { x: box.x + (box.width - w * s) / 2 + (x + 0.5) * s, y: box.y + (box.height - h * s) / 2 + (y + 0.5) * s };
}

const pairRows = (page: Page) => page.locator('[data-testid="pair-row"]').count();
const waitForPairs = (page: Page, n: number) => page.waitForFunction((k) => document.querySelectorAll('[data-testid="pair-row"]').length === k, n);
/** The six numbers of the transform matrix shown on screen. */
async function shownMatrix(page: Page): Promise<number[]> {
  const text = (await page.getByTestId('transform-matrix').textContent())!;
  return text.replace(/[[\]]/g, '').split(',').map(Number);
}

async function openWorkspace(page: Page) {
  await page.goto(`${APP_URL}/fields/${fieldId}/register`);
  await islandsReady(page);
  await page.waitForFunction(() => document.querySelectorAll('[data-testid="afm-pick"] canvas, [data-testid="fl-pick"] canvas').length >= 2);
  await page.waitForTimeout(1500); // tiles and detections load
}

describe('registration workspace in Chromium', () => {
  it('picks three pairs, reviews proposed partners, saves, and a reload shows the same transform and FRE; a stale save gets the conflict message', async ({ newPage }) => {
    const spec = DEMO_FIELDS.find((f) => f.code === 'HCP-001')!;
    const truth = makeDemoPair({ seed: spec.seed, positiveFractions: spec.positiveFractions });
    const beads = truth.truth.filter((t) => t.kind === 'bead').slice(0, 6);
    expect(beads.length).toBe(6);
    const afmSize = 768;
    const flSize = 256;

    const first = await newPage({ viewport: { width: 1500, height: 1000 } });
    await signInAs(first, DEMO.analyst, DEMO_PASSWORD);
    const second = await newPage({ viewport: { width: 1500, height: 1000 } });
    await signInAs(second, secondAnalyst.email, secondAnalyst.password);
    await openWorkspace(first);
    await openWorkspace(second); // the second analyst starts from the same (empty) version

    const clickAfm = async (page: Page, b: (typeof beads)[number]) => {
      const a = await screenPoint(page, 'afm-pick', afmSize, afmSize, b.xPx, b.yPx);
      await page.mouse.click(a.x, a.y);
    };
    const clickFl = async (page: Page, b: (typeof beads)[number]) => {
      const q = applyAffine(truth.flFromAfm, { x: b.xPx, y: b.yPx });
      const f = await screenPoint(page, 'fl-pick', flSize, flSize, q.x, q.y);
      await page.mouse.click(f.x, f.y);
    };
    const proposal = first.getByTestId('partner-proposal');
    // the first three pairs by hand: no transform yet, so nothing is proposed
    for (const [i, b] of beads.slice(0, 3).entries()) {
      await clickAfm(first, b);
      expect(await proposal.count()).toBe(0);
      await clickFl(first, b);
      await waitForPairs(first, i + 1);
    }
    // fourth bead: a click proposes its partner; it is not a pair until accepted (button)
    await clickAfm(first, beads[3]);
    await proposal.waitFor();
    expect(await pairRows(first)).toBe(3);
    expect(await first.locator('.hl-suggested').count()).toBe(1); // its own marker on the fluorescence frame
    await screenshot(first, 'registration-proposed-partner');
    await first.getByRole('button', { name: 'Accept partner' }).click();
    await waitForPairs(first, 4);
    expect(await proposal.count()).toBe(0);
    // fifth: Esc drops the proposal, a new click proposes again, Enter accepts
    await clickAfm(first, beads[4]);
    await proposal.waitFor();
    await first.keyboard.press('Escape');
    await proposal.waitFor({ state: 'detached' });
    expect(await pairRows(first)).toBe(4);
    // two clicks on one spot within OpenSeadragon's double-click time (300 ms) would zoom in instead
    await first.waitForTimeout(500);
    await clickAfm(first, beads[4]);
    await proposal.waitFor();
    await first.keyboard.press('Enter');
    await waitForPairs(first, 5);
    // sixth: the analyst places the partner by hand on the other image instead
    await clickAfm(first, beads[5]);
    await proposal.waitFor();
    expect(await pairRows(first)).toBe(5);
    await clickFl(first, beads[5]);
    await waitForPairs(first, 6);
    expect(await proposal.count()).toBe(0);
    // undo takes back the hand-placed pair only
    await first.keyboard.press('u');
    await waitForPairs(first, 5);
    await first.waitForTimeout(500); // the same spot again: not a double-click
    await clickAfm(first, beads[5]);
    await proposal.waitFor();
    await first.getByRole('button', { name: 'Accept partner' }).click();
    await waitForPairs(first, 6);

    const fre = await first.getByTestId('fre').textContent();
    const freNm = parseFloat(fre!);
    // bead centroids are snapped to sub-pixel detections on both sides: a few nm, far below one 65 nm pixel
    expect(freNm).toBeLessThan(20);
    await expect(first.getByTestId('transform-words').textContent()).resolves.toContain('mirrored');
    // the solved map agrees with the invented scene's map within 1 fluorescence px at the corners of the height map
    const matrix = await shownMatrix(first);
    for (const c of [{ x: 0, y: 0 }, { x: afmSize, y: 0 }, { x: 0, y: afmSize }, { x: afmSize, y: afmSize }]) {
      const shown = applyAffine(matrix as unknown as Affine, c);
      const real = applyAffine(truth.flFromAfm, c);
      expect(Math.hypot(shown.x - real.x, shown.y - real.y)).toBeLessThan(1);
    }
    await screenshot(first, 'registration-six-pairs');

    await first.getByRole('button', { name: /Save version 1/ }).click();
    await first.getByText(/Saved as version 1/).waitFor();
    await first.reload();
    await islandsReady(first);
    await waitForPairs(first, 6);
    expect(await first.getByTestId('fre').textContent()).toBe(fre);
    // the same transform after the reload: on screen, and as saved (the screen rounds to 5 decimals)
    expect(await shownMatrix(first)).toEqual(matrix);
    const saved = await first.evaluate(async (id) => (await (await fetch(`/api/fields/${id}/registration`)).json()), fieldId);
    expect(saved.versions[0].version).toBe(1);
    expect(saved.versions[0].flFromAfm).toHaveLength(6);
    saved.versions[0].flFromAfm.forEach((v: number, i: number) => expect(Math.abs(v - matrix[i])).toBeLessThanOrEqual(5.1e-6));

    // the second analyst adds pairs on the old version and saves: conflict, nothing lost on screen
    for (const [i, b] of beads.slice(0, 3).entries()) {
      await clickAfm(second, b);
      await clickFl(second, b);
      await waitForPairs(second, i + 1);
    }
    await second.getByRole('button', { name: /Save version 1/ }).click();
    await second.getByText(/saved version 1 while you worked from version 0/).waitFor({ timeout: 10_000 });
    expect(await pairRows(second)).toBe(3);
    await screenshot(second, 'registration-conflict');
  });
});
