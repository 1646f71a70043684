/**
 * Per-layer display settings of the field viewer (pure: no DOM, no I/O).
 *
 * Fluorescence tiles are rendered at ingestion as `tint × v`, with
 * `v = clamp((counts − lowCounts) / (highCounts − lowCounts), 0, 1)` (src/lib/jobs/renderLayers.ts).
 * A new black and white point in counts is therefore a per-component linear map of the tile's
 * colours, which an SVG `feComponentTransfer` applies on the GPU without refetching tiles:
 * stage 1 turns a tile component back into the new 0–1 level (clamped by the filter), stage 2
 * tints it again. The stored values and the cursor read-out are never touched.
 */

/** The counts a channel's tiles hold at their darkest (0) and brightest (255) level. */
export interface StoredWindow {
  lowCounts: number;
  highCounts: number;
}

/** What the analyst chose for one fluorescence channel: counts shown black and counts shown at full tint. */
export interface ChannelDisplay {
  blackCounts: number;
  whiteCounts: number;
}

/** Display of the colour-mapped height layer, in percent (100 % = as rendered). */
export interface HeightDisplay {
  brightnessPct: number;
  contrastPct: number;
}

/** `C' = slope × C + intercept` on one colour component in 0–1, as in SVG `<feFuncX type="linear">`. */
export interface LinearTransfer {
  slope: number;
  intercept: number;
}

/** Two linear stages for the R, G and B components; the filter clamps to 0–1 after each stage. */
export interface ChannelTransfer {
  toLevel: [LinearTransfer, LinearTransfer, LinearTransfer];
  toTint: [LinearTransfer, LinearTransfer, LinearTransfer];
}

export const DEFAULT_HEIGHT_DISPLAY: HeightDisplay = { brightnessPct: 100, contrastPct: 100 };

/** The stored window of a channel layer from its tile-set display record, or null when it is missing or empty. */
export function storedWindow(display: Record<string, unknown>): StoredWindow | null {
  const lowCounts = Number(display.lowCounts);
  const highCounts = Number(display.highCounts);
  if (!Number.isFinite(lowCounts) || !Number.isFinite(highCounts) || !(highCounts > lowCounts)) return null;
  return { lowCounts, highCounts };
}

/** The display that reproduces the tiles as rendered. */
export function defaultChannelDisplay(w: StoredWindow): ChannelDisplay {
  return { blackCounts: w.lowCounts, whiteCounts: w.highCounts };
}

/** True when `d` shows the tiles exactly as rendered (so no filter is needed). */
export function isDefaultChannelDisplay(w: StoredWindow, d: ChannelDisplay): boolean {
  return d.blackCounts === w.lowCounts && d.whiteCounts === w.highCounts;
}

/** Slider bounds in counts: from the stored low end to one stored span above the stored high end (to dim a channel). */
export function channelRange(w: StoredWindow): { min: number; max: number; step: number; minGap: number } {
  const span = w.highCounts - w.lowCounts;
  return { min: w.lowCounts, max: w.highCounts + span, step: span / 500, minGap: span / 100 };
}

/**
 * Sets the black or white point and keeps the pair usable: inside `channelRange` and the white
 * point at least 1 % of the stored span above the black point (the moved end gives way).
 */
export function setChannelPoint(w: StoredWindow, d: ChannelDisplay, which: 'black' | 'white', counts: number): ChannelDisplay {
  const { min, max, minGap } = channelRange(w);
  if (!Number.isFinite(counts)) return d;
  if (which === 'black') {
    const blackCounts = Math.min(Math.max(counts, min), max - minGap);
    return { blackCounts, whiteCounts: Math.max(d.whiteCounts, blackCounts + minGap) };
  }
  const whiteCounts = Math.max(Math.min(counts, max), min + minGap);
  return { blackCounts: Math.min(d.blackCounts, whiteCounts - minGap), whiteCounts };
}

/** The tint of a channel from its display record (`rgb(r,g,b)`), as 0–255 components. */
export function parseTint(colour: unknown): [number, number, number] | null {
  const m = /^rgb\(\s*(\d{1,3})\s*,\s*(\d{1,3})\s*,\s*(\d{1,3})\s*\)$/.exec(String(colour ?? ''));
  if (!m) return null;
  const c = [Number(m[1]), Number(m[2]), Number(m[3])];
  return c.every((v) => v <= 255) ? (c as [number, number, number]) : null;
}

/**
 * The filter stages that show a channel tinted `tint` (0–255 per component) with `d`'s black and
 * white points, given the window its tiles were rendered with. A tile component is
 * `x = (tint/255) × v`; stage 1 gives `v' = (counts − black) / (white − black)` from it, stage 2
 * gives `(tint/255) × v'`. A component the tint does not use stays 0.
 */
export function channelTransfer(w: StoredWindow, d: ChannelDisplay, tint: [number, number, number]): ChannelTransfer {
  const span = w.highCounts - w.lowCounts;
  const shown = d.whiteCounts - d.blackCounts;
  if (!(span > 0) || !(shown > 0)) throw new RangeError(`channelTransfer needs low < high and black < white counts, got ${w.lowCounts}–${w.highCounts} and ${d.blackCounts}–${d.whiteCounts}`);
  const per = (t: number): [LinearTransfer, LinearTransfer] => {
    const c = t / 255;
    if (c === 0) return [{ slope: 0, intercept: 0 }, { slope: 0, intercept: 0 }];
    return [{ slope: span / (c * shown), intercept: (w.lowCounts - d.blackCounts) / shown }, { slope: c, intercept: 0 }];
  };
  const [r, g, b] = tint.map(per);
  return { toLevel: [r[0], g[0], b[0]], toTint: [r[1], g[1], b[1]] };
}

/** Applies a transfer to one 0–255 tile pixel the way the filter does (for tests and checks). */
export function applyChannelTransfer(t: ChannelTransfer, rgb: [number, number, number]): [number, number, number] {
  const clamp = (v: number) => Math.min(1, Math.max(0, v));
  return rgb.map((v, k) => {
    const level = clamp(t.toLevel[k].slope * (v / 255) + t.toLevel[k].intercept);
    return clamp(t.toTint[k].slope * level + t.toTint[k].intercept) * 255;
  }) as [number, number, number];
}

/** CSS filter for the height layer (`none` when unchanged, so the colours stay exactly as rendered). */
export function heightFilterCss(d: HeightDisplay): string {
  if (d.brightnessPct === 100 && d.contrastPct === 100) return 'none';
  return `brightness(${d.brightnessPct / 100}) contrast(${d.contrastPct / 100})`;
}

/** Counts for a label: whole counts from 100 up, one decimal below. */
export function formatCounts(counts: number): string {
  return Math.abs(counts) >= 100 ? `${Math.round(counts)} counts` : `${counts.toFixed(1)} counts`;
}
