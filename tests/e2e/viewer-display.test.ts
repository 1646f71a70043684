/**
 * In Chromium: an analyst opens a demo field's fluorescence channels, raises one channel's black level
 * and sees only that channel change on screen (as the transfer predicts), the others and the cursor
 * read-out stay as they were, and reset brings the channel back.
 */
import { describe, expect } from 'vitest';
import { mkdirSync, writeFileSync } from 'node:fs';
import { decode } from 'fast-png';
import { eq } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { signInAs, islandsReady, screenshot } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { demoField } from '../support/demoField';
import { tileSets } from '../../src/lib/db/schema';
import { applyChannelTransfer, channelTransfer, parseTint, storedWindow } from '../../src/components/islands/viewer/layerDisplay';
import { test, it } from '../support/fixtures';

const shotDir = `${process.env.HEIGHTLIGHT_DATA_DIR ?? '.test-data'}/screenshots`;

/** RGB pixels of the top-left 400 × 400 px of the viewer (clear of the overview and the scale bar). */
async function viewerPixels(page: Page, name: string) {
  await page.waitForLoadState('networkidle');
  await page.waitForTimeout(400);
  const box = (await page.getByTestId('field-viewer').boundingBox())!;
  const png = await page.screenshot({ clip: { x: box.x, y: box.y, width: 400, height: 400 } });
  mkdirSync(shotDir, { recursive: true });
  writeFileSync(`${shotDir}/${name}.png`, png);
  const img = decode(png);
  const n = img.width * img.height;
  const rgb = new Float64Array(n * 3);
  for (let i = 0; i < n; i++) for (let k = 0; k < 3; k++) rgb[i * 3 + k] = img.data[i * img.channels + k];
  return rgb;
}
/** Centroid (px) of the pixels whose brightest component is within 25 % of the brightest on screen: the fiducial beads saturate every channel. */
function brightCentroid(rgb: Float64Array, size = 400) {
  let top = 0;
  for (let i = 0; i < rgb.length; i++) top = Math.max(top, rgb[i]);
  let sx = 0, sy = 0, n = 0;
  for (let i = 0; i < rgb.length / 3; i++) {
    if (Math.max(rgb[i * 3], rgb[i * 3 + 1], rgb[i * 3 + 2]) >= 0.75 * top) { sx += i % size; sy += Math.floor(i / size); n++; }
  }
  return { x: sx / n, y: sy / n, n };
}
const mean = (a: Float64Array) => a.reduce((s, v) => s + v, 0) / a.length;
const meanAbsDiff = (a: Float64Array, b: Float64Array) => a.reduce((s, v, i) => s + Math.abs(v - b[i]), 0) / a.length;

async function showOnly(page: Page, names: string[], keep: string) {
  for (const n of names) await page.getByLabel(`Show ${n}`).setChecked(n === keep);
}

describe('per-channel display in the field viewer', () => {
  it('changes one channel only, keeps the read-out raw and resets', async ({ db, newPage }) => {
    const fieldId = await demoField(db, 'HCP-001');
    const sets = await db.select().from(tileSets).where(eq(tileSets.fieldId, fieldId));
    const chans = sets.filter((s) => s.layer.startsWith('ch')).sort((a, b) => a.layer.localeCompare(b.layer));
    expect(chans.length).toBeGreaterThanOrEqual(2);
    const names = chans.map((c) => String((c.display as Record<string, unknown>).marker ?? c.layer));
    const [first, second] = chans;

    const page = await newPage({ viewport: { width: 1400, height: 1100 } });
    const pageErrors: string[] = [];
    page.on('pageerror', (e) => pageErrors.push(e.message));
    await signInAs(page, DEMO.analyst, DEMO_PASSWORD);
    await page.goto(`${APP_URL}/fields/${fieldId}`);
    await islandsReady(page);
    await page.getByRole('button', { name: 'Fluorescence' }).click();
    for (const c of chans) await page.waitForFunction((l) => document.querySelector(`[data-testid="viewer-layer-${l}"] canvas`) !== null, c.layer);
    const filterOf = (layer: string) => page.getByTestId(`viewer-layer-${layer}`).evaluate((e) => getComputedStyle(e).filter);
    for (const c of chans) expect(await filterOf(c.layer)).toBe('none');

    // raw values under the pointer before any display change
    const box = (await page.getByTestId('field-viewer').boundingBox())!;
    // the read-out needs the opened image and the fetched values; nudge the pointer until both are there
    for (let i = 0; i < 60 && !/counts/.test((await page.getByTestId('readout').textContent()) ?? ''); i++) {
      await page.mouse.move(box.x + 201, box.y + 200);
      await page.mouse.move(box.x + 200, box.y + 200);
      await page.waitForTimeout(250);
    }
    const readoutBefore = await page.getByTestId('readout').textContent();
    expect(readoutBefore).toMatch(/µm.*counts/);

    await showOnly(page, names, names[0]);
    const firstBefore = await viewerPixels(page, 'display-first-before');
    await showOnly(page, names, names[1]);
    const secondBefore = await viewerPixels(page, 'display-second-before');
    expect(mean(secondBefore)).toBeGreaterThan(1); // the channel is drawn at all

    // raise the second channel's black level to 40 % of its stored window
    const w = storedWindow(second.display as Record<string, unknown>)!;
    const slider = page.getByLabel(`Black level of ${names[1]}`);
    await slider.fill(String(w.lowCounts + 0.4 * (w.highCounts - w.lowCounts)));
    const blackCounts = Number(await slider.inputValue());
    expect(blackCounts).toBeGreaterThan(w.lowCounts + 0.39 * (w.highCounts - w.lowCounts));
    expect(await page.getByTestId(`black-${second.layer}`).textContent()).toBe(`${Math.round(blackCounts)} counts`);
    expect(await filterOf(second.layer)).toMatch(/^url\("?#.+"?\)$/);
    for (const c of chans.filter((c) => c.layer !== second.layer)) expect(await filterOf(c.layer)).toBe('none');

    const secondAfter = await viewerPixels(page, 'display-second-after');
    // what the filter should give, pixel by pixel, from the unfiltered screen
    const t = channelTransfer(w, { blackCounts, whiteCounts: w.highCounts }, parseTint((second.display as Record<string, unknown>).colour)!);
    const predicted = new Float64Array(secondBefore.length);
    for (let i = 0; i < secondBefore.length; i += 3) {
      const p = applyChannelTransfer(t, [secondBefore[i], secondBefore[i + 1], secondBefore[i + 2]]);
      predicted.set(p, i);
    }
    expect(mean(secondAfter)).toBeLessThan(0.8 * mean(secondBefore));
    expect(meanAbsDiff(secondAfter, predicted)).toBeLessThan(1.5);

    // the other channel looks exactly as before, and the read-out still shows stored counts
    await showOnly(page, names, names[0]);
    const firstAfter = await viewerPixels(page, 'display-first-after');
    expect(meanAbsDiff(firstAfter, firstBefore)).toBeLessThan(0.5);
    await page.mouse.move(box.x + 201, box.y + 200);
    await page.mouse.move(box.x + 200, box.y + 200);
    await page.waitForTimeout(200);
    expect(await page.getByTestId('readout').textContent()).toBe(readoutBefore);

    // both channels set differently, for a look
    for (const n of names) await page.getByLabel(`Show ${n}`).setChecked(true);
    const wf = storedWindow(first.display as Record<string, unknown>)!;
    await page.getByLabel(`Full colour level of ${names[0]}`).fill(String(wf.lowCounts + 0.5 * (wf.highCounts - wf.lowCounts)));
    await page.waitForLoadState('networkidle');
    await screenshot(page, 'display-two-channels');
    await page.getByRole('button', { name: `Reset display of ${names[0]}` }).click();

    // reset brings the second channel back to the tiles as rendered
    await page.getByRole('button', { name: `Reset display of ${names[1]}` }).click();
    expect(await filterOf(second.layer)).toBe('none');
    expect(await page.getByTestId(`black-${second.layer}`).textContent()).toMatch(new RegExp(`^${Math.round(w.lowCounts) >= 100 ? Math.round(w.lowCounts) : w.lowCounts.toFixed(1)} counts$`));
    await showOnly(page, names, names[1]);
    const secondReset = await viewerPixels(page, 'display-second-reset');
    expect(meanAbsDiff(secondReset, secondBefore)).toBeLessThan(0.5);

    // a colour of the analyst's choosing: magenta, the stored window; pixel by pixel as channelTransfer predicts
    await page.getByLabel(`Colour of ${names[1]}`).fill('#ff00ff');
    expect(await filterOf(second.layer)).toMatch(/^url\("?#.+"?\)$/);
    const recoloured = await viewerPixels(page, 'display-second-magenta');
    const tm = channelTransfer(w, { blackCounts: w.lowCounts, whiteCounts: w.highCounts, colour: [255, 0, 255] }, parseTint((second.display as Record<string, unknown>).colour)!);
    const predictedMagenta = new Float64Array(secondBefore.length);
    for (let i = 0; i < secondBefore.length; i += 3) predictedMagenta.set(applyChannelTransfer(tm, [secondBefore[i], secondBefore[i + 1], secondBefore[i + 2]]), i);
    expect(meanAbsDiff(recoloured, predictedMagenta)).toBeLessThan(1.5);
    // magenta has no green: the green component is dark wherever the channel shows
    let green = 0;
    for (let i = 1; i < recoloured.length; i += 3) green += recoloured[i];
    expect(green / (recoloured.length / 3)).toBeLessThan(1);
    await page.getByRole('button', { name: `Reset display of ${names[1]}` }).click();
    expect(await filterOf(second.layer)).toBe('none');

    // zoomed in, the following layer stays on the leading one: the beads sit at the same place in both
    await page.mouse.move(box.x + 300, box.y + 250);
    for (let i = 0; i < 4; i++) { await page.mouse.wheel(0, -400); await page.waitForTimeout(150); }
    await page.waitForTimeout(1500);
    await showOnly(page, names, names[0]);
    const firstZoomed = brightCentroid(await viewerPixels(page, 'display-first-zoomed'));
    await showOnly(page, names, names[1]);
    const secondZoomed = brightCentroid(await viewerPixels(page, 'display-second-zoomed'));
    expect(meanAbsDiff(await viewerPixels(page, 'display-second-zoomed-2'), secondBefore)).toBeGreaterThan(5); // the view did zoom
    expect(firstZoomed.n).toBeGreaterThan(10);
    expect(Math.hypot(firstZoomed.x - secondZoomed.x, firstZoomed.y - secondZoomed.y)).toBeLessThan(3);

    // the height map has its own brightness and contrast; its colour bar follows, its nm labels do not move
    await page.getByRole('button', { name: 'Height map' }).click();
    await page.waitForFunction(() => document.querySelector('[data-testid="viewer-layer-height"] canvas') !== null);
    const barLabels = await page.getByLabel('Height colour bar').textContent();
    await page.getByLabel('Brightness of the height map').fill('150');
    await page.getByLabel('Contrast of the height map').fill('80');
    expect(await page.getByTestId('layer-controls-height').textContent()).toContain('150 %');
    expect(await filterOf('height')).toBe('brightness(1.5) contrast(0.8)');
    expect(await page.getByLabel('Height colour bar').locator('div').evaluate((e) => getComputedStyle(e).filter)).toBe('brightness(1.5) contrast(0.8)');
    expect(await page.getByLabel('Height colour bar').textContent()).toBe(barLabels);
    await page.waitForLoadState('networkidle');
    await screenshot(page, 'display-height');
    await page.getByRole('button', { name: 'Reset height map display' }).click();
    expect(await filterOf('height')).toBe('none');
    expect(pageErrors).toEqual([]);
  });
});
