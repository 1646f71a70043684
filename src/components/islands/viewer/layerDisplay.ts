/**
 * Per-layer display settings of the field viewer (pure: no DOM, no I/O).
 *
 * Fluorescence tiles are rendered at ingestion as `tint × v`, with
 * `v = clamp((counts − lowCounts) / (highCounts − lowCounts), 0, 1)` (src/lib/jobs/renderLayers.ts).
 * A new black and white point in counts is therefore a per-component linear map of the tile's
 * colours, which an SVG filter applies on the GPU without refetching tiles: stage 0 copies the
 * tint's strongest component into all three, stage 1 turns it back into the new 0–1 level (clamped
 * by the filter), stage 2 tints it again, in the rendered colour or one the analyst chose. The
 * stored values and the cursor read-out are never touched.
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
  /** Display colour (0–255 per component); absent: the colour the tiles were rendered in. */
  colour?: [number, number, number];
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

/**
 * The filter's stages: copy component `source` (0 R, 1 G, 2 B) into all three, one linear map to
 * the level, then one per component to the display colour; the filter clamps to 0–1 after each.
 */
export interface ChannelTransfer {
  source: 0 | 1 | 2;
  toLevel: LinearTransfer;
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
export function isDefaultChannelDisplay(w: StoredWindow, d: ChannelDisplay, tint?: [number, number, number]): boolean {
  const sameColour = !d.colour || (tint !== undefined && d.colour.every((c, k) => c === tint[k]));
  return d.blackCounts === w.lowCounts && d.whiteCounts === w.highCounts && sameColour;
}

/** `#rrggbb` for a colour input, from 0–255 components. */
export function toHex(c: readonly [number, number, number]): string {
  return `#${c.map((v) => Math.round(v).toString(16).padStart(2, '0')).join('')}`;
}

/** 0–255 components from a colour input's `#rrggbb`, or null when it is not one. */
export function fromHex(hex: string): [number, number, number] | null {
  const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(hex);
  return m ? [parseInt(m[1], 16), parseInt(m[2], 16), parseInt(m[3], 16)] : null;
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
 * The filter stages that show a channel rendered with tint `tint` (0–255 per component) with `d`'s
 * black and white points and colour. A tile component is `x = (tint/255) × v`; the strongest tint
 * component carries v best, so stage 0 takes that one, stage 1 gives `v' = (counts − black) / (white − black)`
 * from it, stage 2 gives `(colour/255) × v'`.
 * @throws RangeError when the windows are empty or the tint is black
 */
export function channelTransfer(w: StoredWindow, d: ChannelDisplay, tint: [number, number, number]): ChannelTransfer {
  const span = w.highCounts - w.lowCounts;
  const shown = d.whiteCounts - d.blackCounts;
  if (!(span > 0) || !(shown > 0)) throw new RangeError(`channelTransfer needs low < high and black < white counts, got ${w.lowCounts}–${w.highCounts} and ${d.blackCounts}–${d.whiteCounts}`);
  const source = (tint[1] > tint[0] ? (tint[2] > tint[1] ? 2 : 1) : tint[2] > tint[0] ? 2 : 0) as 0 | 1 | 2;
  const c = tint[source] / 255;
  if (c === 0) throw new RangeError('channelTransfer needs a tint with a non-zero component');
  const colour = d.colour ?? tint;
  return {
    source,
    toLevel: { slope: span / (c * shown), intercept: (w.lowCounts - d.blackCounts) / shown },
    toTint: colour.map((k) => ({ slope: k / 255, intercept: 0 })) as ChannelTransfer['toTint'],
  };
}

/** Applies a transfer to one 0–255 tile pixel the way the filter does (for tests and checks). */
export function applyChannelTransfer(t: ChannelTransfer, rgb: [number, number, number]): [number, number, number] {
  const clamp = (v: number) => Math.min(1, Math.max(0, v));
  const level = clamp(t.toLevel.slope * (rgb[t.source] / 255) + t.toLevel.intercept);
  return t.toTint.map((s) => clamp(s.slope * level + s.intercept) * 255) as [number, number, number];
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
