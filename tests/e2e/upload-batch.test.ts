/**
 * In Chromium, the upload form's batch and file handling: removing a field keeps the other fields'
 * files with them, a failed or wrong file can be removed, and an uncalibrated pixel size from the
 * file is refused until the biologist types one (which then wins).
 */
import { describe, expect } from 'vitest';
import type { Page } from 'playwright-core';
import { signInAs, screenshot, islandsReady } from '../support/browser';
import { APP_URL, type AppClient } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { makeDemoPair } from '../../fixtures/demoScene';
import { writeTiff } from '../../src/lib/imaging';
import { test, it, type NewPage } from '../support/fixtures';

let bio: AppClient;
test.beforeAll(async ({ signedIn }) => { bio = await signedIn('biologist'); });

const tif = (name: string, bytes: Uint8Array) => ({ name, mimeType: 'image/tiff', buffer: Buffer.from(bytes) });

async function uploadPage(newPage: NewPage): Promise<Page> {
  const page = await newPage({ viewport: { width: 1400, height: 1000 } });
  await signInAs(page, DEMO.biologist, DEMO_PASSWORD);
  await page.goto(`${APP_URL}/upload`);
  await islandsReady(page);
  return page;
}

/** Saves, and answers the saved field (with its files) as the API reports it. */
async function saveAndFetch(page: Page, name: string) {
  await page.getByRole('button', { name: 'Confirm and save' }).click();
  const link = page.getByTestId('upload-summary').getByRole('link', { name });
  await link.waitFor({ timeout: 30_000 });
  const id = (await link.getAttribute('href'))!.split('/').pop()!;
  return (await bio.fetch(`/api/fields/${id}`)).json() as Promise<{ field: { name: string; afmPixelNm: number; flPixelNm: number }; files: { kind: string; originalName: string }[] }>;
}

describe('upload form in Chromium', () => {
  it('removing Field 1 of 2 leaves Field 2 with its own files, and saves them', async ({ newPage }) => {
    const page = await uploadPage(newPage);
    const a = makeDemoPair({ seed: 11, afmSizePx: 192, flSizePx: 64, nbVesicles: 5 });
    const b = makeDemoPair({ seed: 12, afmSizePx: 192, flSizePx: 64, nbVesicles: 5 });
    await page.getByRole('button', { name: 'Add another field' }).click();
    for (const [i, p, tag] of [[0, a, 'A'], [1, b, 'B']] as const) {
      await page.locator(`#sample-${i}`).selectOption({ label: 'HCP-002' });
      await page.locator(`#name-${i}`).fill(`batch ${tag}`);
      await page.getByTestId(`topography-${i}`).setInputFiles(tif(`${tag}-height.tif`, p.topographyTiff));
      await page.getByTestId(`fluorescence-${i}`).setInputFiles(tif(`${tag}-fluo.tif`, p.fluorescenceTiff));
    }
    await page.getByTestId('file-meta').nth(3).waitFor({ timeout: 30_000 });
    // the section's own remove button (its file rows' buttons say "Remove file …")
    await page.getByRole('region', { name: 'Field 1' }).getByRole('button', { name: /^Remove( field 1)?$/ }).click();
    // the one remaining section is Field 2's: its name and its files
    expect(await page.locator('#name-0').inputValue()).toBe('batch B');
    expect(await page.getByTestId('topography-0-state').allTextContents()).toEqual([expect.stringContaining('B-height.tif')]);
    expect(await page.getByTestId('fluorescence-0-state').allTextContents()).toEqual([expect.stringContaining('B-fluo.tif')]);
    const saved = await saveAndFetch(page, 'batch B');
    expect(saved.field.name).toBe('batch B');
    expect(saved.files.map((f) => [f.kind, f.originalName]).sort()).toEqual([['fluorescence', 'B-fluo.tif'], ['topography', 'B-height.tif']]);
  });

  it('a failed file can be removed with the keyboard and replaced, then the field saves', async ({ newPage }) => {
    const page = await uploadPage(newPage);
    const p = makeDemoPair({ seed: 13, afmSizePx: 192, flSizePx: 64, nbVesicles: 5 });
    await page.getByLabel('Sample').selectOption({ label: 'HCP-002' });
    await page.getByLabel('Field name').fill('after removal');
    await page.getByTestId('topography-0').setInputFiles(tif('good-height.tif', p.topographyTiff));
    await page.getByTestId('fluorescence-0').setInputFiles({ name: 'notes.tif', mimeType: 'image/tiff', buffer: Buffer.from('this is not a TIFF file at all') });
    await page.getByTestId('fluorescence-0-state').getByRole('alert').waitFor({ timeout: 30_000 });
    // saving is refused while the failed file is listed
    await page.getByRole('button', { name: 'Confirm and save' }).click();
    await page.getByTestId('upload-summary').waitFor();
    expect(await page.getByTestId('upload-summary').textContent()).toContain('retry or remove the failed ones');
    const remove = page.getByRole('button', { name: 'Remove file notes.tif' });
    await remove.focus();
    await page.keyboard.press('Enter');
    expect(await page.getByTestId('fluorescence-0-state').count()).toBe(0);
    await page.getByTestId('fluorescence-0').setInputFiles(tif('good-fluo.tif', p.fluorescenceTiff));
    await page.getByTestId('file-meta').nth(1).waitFor({ timeout: 30_000 });
    const saved = await saveAndFetch(page, 'after removal');
    expect(saved.files.map((f) => f.originalName).sort()).toEqual(['good-fluo.tif', 'good-height.tif']);
  });

  it('refuses a 72 px/inch height map until a pixel size is typed, then saves the typed value', async ({ newPage }) => {
    const page = await uploadPage(newPage);
    const p = makeDemoPair({ seed: 14, afmSizePx: 192, flSizePx: 64, nbVesicles: 5 });
    // 1 inch / 72 = 352 777.8 nm per pixel (TIFF 6.0 section 8, ResolutionUnit 2 = inch)
    const heights = Float32Array.from({ length: 96 * 96 }, (_, i) => (i * 7919) % 23);
    const dpi72 = writeTiff([{ data: heights, width: 96, height: 96 }], { bitsPerSample: 32, sampleFormat: 'float', resolution: { x: 72, y: 72, unit: 'inch' } });
    await page.getByLabel('Sample').selectOption({ label: 'HCP-002' });
    await page.getByLabel('Field name').fill('typed pixel');
    await page.getByTestId('topography-0').setInputFiles(tif('exported-72dpi.tif', dpi72));
    await page.getByTestId('fluorescence-0').setInputFiles(tif('fluo.tif', p.fluorescenceTiff));
    await page.getByTestId('file-meta').nth(1).waitFor({ timeout: 30_000 });
    // per file: what was read, the reader's warning and why the size is not used
    expect(await page.getByTestId('file-meta').nth(0).textContent()).toContain('352777.78 nm/px (from resolution tags)');
    const warnings = (await page.getByTestId('topography-0-state').getByTestId('file-warning').allTextContents()).join(' ');
    expect(warnings).toContain('72 pixels per inch, a common default');
    expect(warnings).toContain('never calibrated, so it was not used');
    expect(await page.getByTestId('afm-pixel-0').textContent()).toContain('AFM pixel size needed');
    expect(await page.getByTestId('fl-pixel-0').textContent()).toContain('Fluorescence pixel size used: 65 nm (from the file, resolution tags)');
    await page.getByRole('button', { name: 'Confirm and save' }).click();
    await page.getByTestId('upload-summary').waitFor();
    expect(await page.getByTestId('upload-summary').textContent()).toContain('Enter the AFM pixel size in nm');
    await screenshot(page, 'upload-pixel-refused');

    await page.getByLabel('AFM pixel size').fill('13');
    await page.getByTestId('afm-pixel-0').getByText('AFM pixel size used: 13 nm (typed above)').waitFor();
    expect(await page.getByTestId('afm-pixel-0').textContent()).toContain('differs from the file\'s 352,800 nm (resolution tags), which looks uncalibrated; your value is used');
    const saved = await saveAndFetch(page, 'typed pixel');
    expect(saved.field.afmPixelNm).toBe(13);
    expect(saved.field.flPixelNm).toBeCloseTo(65, 4);
  });
});
