/**
 * In Chromium: a biologist uploads a pair, sees what was read, saves, and sees the field in the
 * viewer; an analyst opens a linked demo field's vesicle table, filters it and downloads the CSV.
 */
import { describe, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { signInAs, screenshot, islandsReady } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { demoField } from '../support/demoField';
import { makeDemoPair } from '../../fixtures/demoScene';
import { DEMO_FIELDS } from '../../scripts/seedDemoFields';
import { applyAffine } from '../../src/lib/analysis/geometry';
import { test, it } from '../support/fixtures';

describe('upload in Chromium', () => {
  it('uploads a pair, confirms the metadata and sees the field in the viewer', async ({ newPage }) => {
    const page = await newPage({ viewport: { width: 1400, height: 1000 } });
    await signInAs(page, DEMO.biologist, DEMO_PASSWORD);
    await page.goto(`${APP_URL}/upload`);
    // the form's state is set up on hydration; typing before it would be reset
    await islandsReady(page);
    const pair = makeDemoPair({ seed: 77, afmSizePx: 256, flSizePx: 96, nbVesicles: 15 });
    await page.getByLabel('Sample').selectOption({ label: 'HCP-002' });
    await page.getByLabel('Field name').fill('browser pair');
    expect(await page.getByLabel('Sample').inputValue()).not.toBe('');
    await page.getByTestId('topography-0').setInputFiles({ name: 'HCP-002-b1-height.tif', mimeType: 'image/tiff', buffer: Buffer.from(pair.topographyTiff) });
    await page.getByTestId('fluorescence-0').setInputFiles({ name: 'HCP-002-b1-fluo.tif', mimeType: 'image/tiff', buffer: Buffer.from(pair.fluorescenceTiff) });
    const metas = page.getByTestId('file-meta');
    await metas.nth(1).waitFor({ timeout: 30_000 });
    expect(await metas.nth(0).textContent()).toContain('256 × 256 px · 32-bit float · 1 page · 13.00 nm/px (from OME-XML)');
    expect(await metas.nth(1).textContent()).toContain('96 × 96 px · 16-bit uint · 3 pages · 65.00 nm/px (from resolution tags)');
    await screenshot(page, 'upload-read');
    await page.getByRole('button', { name: 'Confirm and save' }).click();
    await page.getByTestId('upload-summary').waitFor();
    expect(await page.getByTestId('upload-summary').textContent()).toContain('saved; processing has started');
    const saved = page.getByTestId('upload-summary').getByRole('link', { name: 'browser pair' });
    await saved.waitFor();
    await saved.click();
    await page.getByTestId('field-viewer').waitFor({ timeout: 90_000 });
    await page.waitForFunction(() => document.querySelector('[data-testid="field-viewer"] canvas') !== null);
    await page.getByTestId('scale-bar').waitFor();
    expect(await page.getByTestId('scale-bar').textContent()).toMatch(/(nm|µm)$/);
    await screenshot(page, 'upload-viewer');
  });
});

describe('vesicle table in Chromium', () => {
  it('opens a linked demo field, filters the table and downloads the CSV', async ({ db, newPage, signedIn }) => {
    // link the HCP-003 demo field through the API first (bead pairs from the generator's truth)
    const analyst = await signedIn('analyst');
    const fieldId = await demoField(db, 'HCP-003');
    const spec = DEMO_FIELDS.find((f) => f.code === 'HCP-003')!;
    const truth = makeDemoPair({ seed: spec.seed, positiveFractions: spec.positiveFractions });
    const pairs = truth.truth.filter((t) => t.kind === 'bead').map((b) => ({ afm: { x: b.xPx, y: b.yPx }, fl: applyAffine(truth.flFromAfm, { x: b.xPx, y: b.yPx }) }));
    const versions = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions;
    expect((await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: versions[0]?.version ?? 0, pairs })).status).toBe(201);
    expect((await analyst.fetch(`/api/fields/${fieldId}/link`, { method: 'POST' })).status).toBe(202);
    for (let i = 0; i < 180; i++) {
      const f = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field;
      if (f.status === 'linked' && (f.progress?.fraction ?? 1) >= 1) break;
      if (f.failureReason) throw new Error(f.failureReason);
      await new Promise((r) => setTimeout(r, 500));
    }

    const page = await newPage({ viewport: { width: 1400, height: 1000 }, acceptDownloads: true });
    await signInAs(page, DEMO.analyst, DEMO_PASSWORD);
    await page.goto(`${APP_URL}/fields/${fieldId}`);
    await islandsReady(page);
    const count = page.getByTestId('vesicle-count');
    await count.waitFor({ timeout: 30_000 });
    await page.waitForFunction(() => {
      const t = document.querySelector('[data-testid="vesicle-count"]')?.textContent ?? '';
      return /· [1-9][\d,]* vesicles/.test(t) && !t.includes('loading');
    });
    const all = Number((await count.textContent())!.match(/· ([\d,]+) vesicles/)![1].replace(/,/g, ''));
    expect(all).toBeGreaterThan(100);
    await page.getByLabel('Minimum height (nm)').fill('20');
    await page.waitForFunction((n) => {
      const m = document.querySelector('[data-testid="vesicle-count"]')?.textContent?.match(/· ([\d,]+) vesicles/);
      return m && Number(m[1].replace(/,/g, '')) < n && !document.querySelector('[data-testid="vesicle-count"]')!.textContent!.includes('loading');
    }, all);
    const heights = await page.locator('[data-testid="vesicle-table"] tbody tr td:nth-child(2)').allTextContents();
    expect(heights.length).toBeGreaterThan(0);
    for (const h of heights) expect(Number(h)).toBeGreaterThanOrEqual(20);
    // each marker's z column (amplitude / SE: dimensionless, so no unit) follows its amplitude column, then its q
    const headers = (await page.locator('[data-testid="vesicle-table"] thead th').allTextContents()).map((t) => t.replace(/ [▲▼]$/, ''));
    const zCol = headers.findIndex((t) => / z$/.test(t));
    expect(zCol).toBeGreaterThan(0);
    const marker = headers[zCol].replace(/ z$/, '');
    expect(headers[zCol - 1]).toBe(`${marker} amplitude (counts)`);
    expect(headers[zCol + 1]).toBe(`${marker} q`);
    const zs = await page.locator(`[data-testid="vesicle-table"] tbody tr td:nth-child(${zCol + 1})`).allTextContents();
    expect(zs).toHaveLength(heights.length);
    expect(zs.some((v) => Number.isFinite(Number(v)) && v !== '')).toBe(true);
    for (const v of zs) expect(v === '–' || /^-?\d+\.\d$/.test(v)).toBe(true);
    await screenshot(page, 'vesicle-table-filtered');

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download CSV' }).click()]);
    const text = readFileSync((await download.path())!, 'utf8').trim().split('\n');
    expect(text[0]).toMatch(/^# Research use only/);
    expect(text[1]).toContain('height_nm');
    expect(text[1].split(',')).toEqual(expect.arrayContaining([`${marker}_z`, `${marker}_q`, `${marker}_call`, `${marker}_amplitude_se_counts`]));
    const hi = text[1].split(',').indexOf('height_nm');
    expect(text.length - 2).toBe(heights.length > 0 ? Number((await count.textContent())!.match(/· ([\d,]+) vesicles/)![1].replace(/,/g, '')) : 0);
    for (const line of text.slice(2)) expect(Number(line.split(',')[hi])).toBeGreaterThanOrEqual(20);
  });
});
