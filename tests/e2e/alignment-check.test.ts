/**
 * In Chromium: on a demo field with a saved registration, the analyst checks the alignment by eye. The
 * checkerboard takes its squares from the two images, the square size moves the borders, the blink
 * alternates and pauses, the cross-fade mixes, and beads (bright in every channel) land on bright
 * fluorescence through the saved transform.
 */
import { describe, expect } from 'vitest';
import type { Page } from 'playwright-core';
import { signInAs, screenshot, islandsReady } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { demoField } from '../support/demoField';
import { makeDemoPair } from '../../fixtures/demoScene';
import { DEMO_FIELDS } from '../../scripts/seedDemoFields';
import { applyAffine } from '../../src/lib/analysis/geometry';
import { test, it } from '../support/fixtures';

const spec = DEMO_FIELDS.find((f) => f.code === 'HCP-003')!;
const truth = makeDemoPair({ seed: spec.seed, positiveFractions: spec.positiveFractions });
const beads = truth.truth.filter((t) => t.kind === 'bead');
let fieldId: string;

test.beforeAll(async ({ db, signedIn }) => {
  fieldId = await demoField(db, spec.code);
  const analyst = await signedIn('analyst');
  const pairs = beads.map((b) => ({ afm: { x: b.xPx, y: b.yPx }, fl: applyAffine(truth.flFromAfm, { x: b.xPx, y: b.yPx }) }));
  const versions = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions;
  const save = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: versions[0]?.version ?? 0, pairs });
  expect(save.status).toBe(201);
});

/** RGBA of canvas pixels (canvas = AFM read-out grid, here the full 768 × 768 AFM frame). */
function pixels(page: Page, points: { x: number; y: number }[]) {
  return page.evaluate((pts) => {
    const c = document.querySelector<HTMLCanvasElement>('[data-testid="alignment-canvas"]')!;
    const ctx = c.getContext('2d')!;
    return pts.map((p) => Array.from(ctx.getImageData(Math.round(p.x), Math.round(p.y), 1, 1).data));
  }, points);
}

/** Share of canvas pixels that are not black, and of distinct colours (a blank or one-colour canvas fails). */
function coverage(page: Page) {
  return page.evaluate(() => {
    const c = document.querySelector<HTMLCanvasElement>('[data-testid="alignment-canvas"]')!;
    const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
    let lit = 0;
    const colours = new Set<number>();
    for (let i = 0; i < d.length; i += 4) {
      if (d[i] + d[i + 1] + d[i + 2] > 0) lit++;
      colours.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2]);
    }
    return { lit: lit / (d.length / 4), colours: colours.size, width: c.width, height: c.height };
  });
}

/** Screenshot of the check section alone, at full resolution, beside the full-page ones. */
async function sectionShot(page: Page, name: string) {
  await page.getByTestId('alignment-check').screenshot({ path: `${process.env.HEIGHTLIGHT_DATA_DIR ?? '.test-data'}/screenshots/${name}.png` });
}

const brightness = (rgba: number[]) => rgba[0] + rgba[1] + rgba[2];

describe('alignment check in Chromium', () => {
  it('draws a checkerboard, blink and cross-fade of the two images through the saved transform', async ({ newPage }) => {
    const page = await newPage({ viewport: { width: 1500, height: 1100 } });
    await signInAs(page, DEMO.analyst, DEMO_PASSWORD);
    await page.goto(`${APP_URL}/fields/${fieldId}/register`);
    await islandsReady(page);
    const check = page.getByTestId('alignment-check');
    await check.scrollIntoViewIfNeeded();
    // the canvas takes the read-out size once both images are loaded and drawn
    await page.waitForFunction(() => document.querySelector<HTMLCanvasElement>('[data-testid="alignment-canvas"]')?.width === 768, undefined, { timeout: 20_000 });

    const cov = await coverage(page);
    expect(cov.height).toBe(768);
    expect(cov.lit).toBeGreaterThan(0.9); // viridis has no black, and the fluorescence frame covers the AFM frame
    expect(cov.colours).toBeGreaterThan(200);
    await expect(page.getByTestId('square-size').textContent()).resolves.toBe('1.0 µm');
    await screenshot(page, 'alignment-checkerboard');
    await sectionShot(page, 'alignment-checkerboard-1um');

    // the two whole images, from the blink mode, paused
    await page.getByRole('button', { name: 'Blink' }).click();
    await page.getByRole('button', { name: 'Pause' }).click();
    if ((await page.getByTestId('blink-showing').textContent()) !== 'height map') await page.getByRole('button', { name: 'Switch image' }).click();
    await expect(page.getByTestId('blink-showing').textContent()).resolves.toBe('height map');
    // sample points in the top row of squares, clear of the scale bar: x = 30 (square 0), 110 (square 1 at 1 µm = 76.9 px)
    const probes = [{ x: 30, y: 30 }, { x: 110, y: 30 }, { x: 200, y: 30 }, ...beads.map((b) => ({ x: b.xPx, y: b.yPx }))];
    const afm = await pixels(page, probes);
    await page.getByRole('button', { name: 'Switch image' }).click();
    await expect(page.getByTestId('blink-showing').textContent()).resolves.toMatch(/^Channel 1\b/);
    const fl = await pixels(page, probes);
    await sectionShot(page, 'alignment-blink-fluorescence');

    // beads are bright in every channel: through the saved transform they land on bright fluorescence,
    // well above the frame's average
    const frame = await page.evaluate(() => {
      const c = document.querySelector<HTMLCanvasElement>('[data-testid="alignment-canvas"]')!;
      const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let s = 0;
      for (let i = 0; i < d.length; i += 4) s += d[i] + d[i + 1] + d[i + 2];
      return s / (d.length / 4);
    });
    const beadMean = fl.slice(3).reduce((s, p) => s + brightness(p), 0) / beads.length;
    expect(beadMean).toBeGreaterThan(4 * frame);
    // and the two images differ where the checkerboard is probed (otherwise the next checks prove nothing)
    expect(afm[0]).not.toEqual(fl[0]);
    expect(afm[1]).not.toEqual(fl[1]);

    // paused: the image stays; playing at 8 Hz: it changes (allowed 5 s, 40 periods, for a loaded CI machine)
    await page.waitForTimeout(600);
    await expect(page.getByTestId('blink-showing').textContent()).resolves.toMatch(/^Channel 1\b/);
    await page.getByLabel('Blink rate (Hz)').focus();
    for (let i = 0; i < 12; i++) await page.keyboard.press('ArrowRight');
    await expect(page.getByTestId('blink-rate').textContent()).resolves.toBe('8.0 Hz (125 ms each)');
    await page.getByRole('button', { name: 'Play' }).click();
    await page.waitForFunction(() => document.querySelector('[data-testid="blink-showing"]')?.textContent === 'height map', undefined, { timeout: 5000 });

    // checkerboard at 1 µm: square 0 from the height map, square 1 from the fluorescence
    await page.getByRole('button', { name: 'Checkerboard' }).click();
    let board = await pixels(page, probes.slice(0, 3));
    expect(board[0]).toEqual(afm[0]);
    expect(board[1]).toEqual(fl[1]);
    expect(board[2]).toEqual(afm[2]); // x = 200 is in square 2 (153.8–230.8 px)
    // 2 µm squares (153.8 px): x = 110 now falls in square 0, x = 200 in square 1
    await page.getByLabel('Square size (µm)').focus();
    for (let i = 0; i < 10; i++) await page.keyboard.press('ArrowRight');
    await expect(page.getByTestId('square-size').textContent()).resolves.toBe('2.0 µm');
    board = await pixels(page, probes.slice(0, 3));
    expect(board[0]).toEqual(afm[0]);
    expect(board[1]).toEqual(afm[1]);
    expect(board[2]).toEqual(fl[2]);
    await sectionShot(page, 'alignment-checkerboard-2um');

    // cross-fade: 50 % is the mean of the two images (±1 for rounding), 0 % the height map
    await page.getByRole('button', { name: 'Cross-fade' }).click();
    await expect(page.getByTestId('fade-share').textContent()).resolves.toBe('50 % fluor.');
    const mixed = await pixels(page, probes.slice(0, 2));
    for (const [k, p] of mixed.entries()) for (let c = 0; c < 3; c++) expect(Math.abs(p[c] - (afm[k][c] + fl[k][c]) / 2)).toBeLessThanOrEqual(1);
    await sectionShot(page, 'alignment-fade-50');
    await page.getByLabel('Fluorescence share (%)').focus();
    await page.keyboard.press('Home');
    await expect(page.getByTestId('fade-share').textContent()).resolves.toBe('0 % fluor.');
    expect((await pixels(page, probes.slice(0, 1)))[0]).toEqual(afm[0]);

    // zoom 4×: the canvas is four frames wide, and the view stays on the middle of the field
    await page.getByRole('button', { name: '4×' }).click();
    await page.waitForFunction(() => {
      const f = document.querySelector<HTMLElement>('[data-testid="alignment-frame"]')!;
      return f.scrollLeft > 0;
    }, undefined, { timeout: 5000 });
    const z = await page.evaluate(() => {
      const f = document.querySelector<HTMLElement>('[data-testid="alignment-frame"]')!;
      const c = document.querySelector<HTMLCanvasElement>('[data-testid="alignment-canvas"]')!;
      const r = c.getBoundingClientRect();
      return { frameW: f.clientWidth, frameH: f.clientHeight, canvasW: r.width, canvasH: r.height, left: f.scrollLeft, top: f.scrollTop };
    });
    expect(z.canvasW / z.frameW).toBeCloseTo(4, 1);
    // centred: the view's middle is the canvas's middle, within a pixel or two
    expect(Math.abs(z.left + z.frameW / 2 - z.canvasW / 2)).toBeLessThan(3);
    expect(Math.abs(z.top + z.frameH / 2 - z.canvasH / 2)).toBeLessThan(3);
    await sectionShot(page, 'alignment-zoom-4x');
    await page.getByRole('button', { name: 'Whole field' }).click();
    await page.waitForFunction(() => {
      const f = document.querySelector<HTMLElement>('[data-testid="alignment-frame"]')!;
      return f.scrollWidth <= f.clientWidth + 1;
    }, undefined, { timeout: 5000 });
  });
});
