import { describe, it, expect } from 'vitest';
import {
  applyChannelTransfer, channelRange, channelTransfer, defaultChannelDisplay, formatCounts, heightFilterCss,
  isDefaultChannelDisplay, parseTint, setChannelPoint, storedWindow, toHex, fromHex,
} from '../layerDisplay';

// The tile encoding of renderChannelLayer (src/lib/jobs/renderLayers.ts): tint × clamp((counts − low) / span), 8-bit.
function tilePixel(counts: number, low: number, high: number, tint: [number, number, number]): [number, number, number] {
  const v = Math.min(1, Math.max(0, (counts - low) / (high - low)));
  return tint.map((c) => Math.trunc(c * v)) as [number, number, number];
}

const w = { lowCounts: 100, highCounts: 1100 };

describe('storedWindow and parseTint', () => {
  it('reads the window and tint a channel tile set was rendered with', () => {
    expect(storedWindow({ lowCounts: 100, highCounts: 1100, unit: 'counts' })).toEqual(w);
    expect(storedWindow({ lowCounts: 5, highCounts: 5 })).toBeNull();
    expect(storedWindow({ unit: 'nm' })).toBeNull();
    expect(parseTint('rgb(255,170,40)')).toEqual([255, 170, 40]);
    expect(parseTint('rgb(300,0,0)')).toBeNull();
    expect(parseTint('#fff')).toBeNull();
  });
});

describe('channelTransfer', () => {
  it('maps a worked pixel to the new window (hand computation)', () => {
    // counts 550 with low 100, high 1100: tile level 0.45. New window 300–800: (550 − 300) / 500 = 0.5.
    const t = channelTransfer(w, { blackCounts: 300, whiteCounts: 800 }, [255, 255, 255]);
    expect(t.toLevel.slope).toBeCloseTo(2, 12); // span 1000 / (1 × 500)
    expect(t.toLevel.intercept).toBeCloseTo(-0.4, 12); // (100 − 300) / 500
    expect(applyChannelTransfer(t, [0.45 * 255, 0.45 * 255, 0.45 * 255])[0]).toBeCloseTo(127.5, 9);
  });

  it('reproduces a count window on tinted 8-bit tiles within one tile step', () => {
    const tint: [number, number, number] = [255, 170, 40];
    const d = { blackCounts: 250, whiteCounts: 700 };
    const t = channelTransfer(w, d, tint);
    for (let counts = 0; counts <= 1600; counts += 37) {
      const got = applyChannelTransfer(t, tilePixel(counts, w.lowCounts, w.highCounts, tint));
      // what the channel would look like had it been rendered with the new window from the start
      const want = tint.map((c) => c * Math.min(1, Math.max(0, (Math.min(counts, w.highCounts) - d.blackCounts) / (d.whiteCounts - d.blackCounts))));
      // one 8-bit tile step of the stored window, magnified by the window's ratio (1000 / 450)
      got.forEach((g, k) => expect(Math.abs(g - want[k])).toBeLessThanOrEqual((1000 / 450) * 1.0001 + 1e-9));
      // never brighter than the tint itself (the second stage keeps the hue)
      got.forEach((g, k) => expect(g).toBeLessThanOrEqual(tint[k] + 1e-9));
    }
  });

  it('is the identity for the stored window and leaves unused components dark', () => {
    const t = channelTransfer(w, defaultChannelDisplay(w), [80, 140, 0]);
    expect(applyChannelTransfer(t, [40, 70, 0]).map((v) => Math.round(v * 1e9) / 1e9)).toEqual([40, 70, 0]);
    expect(t.toTint[2]).toEqual({ slope: 0, intercept: 0 });
    expect(isDefaultChannelDisplay(w, defaultChannelDisplay(w))).toBe(true);
    expect(isDefaultChannelDisplay(w, { blackCounts: 100, whiteCounts: 900 })).toBe(false);
  });

  it('dims a channel when the white point is above the stored high end', () => {
    const t = channelTransfer(w, { blackCounts: 100, whiteCounts: 2100 }, [255, 255, 255]);
    expect(applyChannelTransfer(t, [255, 255, 255])[0]).toBeCloseTo(127.5, 9);
  });

  it('refuses an empty window', () => {
    expect(() => channelTransfer(w, { blackCounts: 500, whiteCounts: 500 }, [255, 0, 0])).toThrow(RangeError);
  });

  it('recolours: a green channel shown in magenta keeps its levels (hand computation)', () => {
    // rendered green (0, 255, 0); a tile pixel (0, 102, 0) is level 0.4. Shown in magenta (255, 0, 255) with
    // the stored window: (0.4 × 255, 0, 0.4 × 255) = (102, 0, 102). The level comes from G, the only component
    // the tile has, so it crosses into R and B.
    const d = { ...defaultChannelDisplay(w), colour: [255, 0, 255] as [number, number, number] };
    const t = channelTransfer(w, d, [0, 255, 0]);
    expect(t.source).toBe(1);
    expect(applyChannelTransfer(t, [0, 102, 0]).map((v) => Math.round(v * 1e9) / 1e9)).toEqual([102, 0, 102]);
    // a new window and a new colour together: counts 550 → level 0.5 in the 300–800 window, cyan (0, 200, 200)
    const t2 = channelTransfer(w, { blackCounts: 300, whiteCounts: 800, colour: [0, 200, 200] }, [0, 255, 0]);
    expect(applyChannelTransfer(t2, [0, 0.45 * 255, 0]).map((v) => Math.round(v * 1e9) / 1e9)).toEqual([0, 100, 100]);
    // no filter is needed only when the colour is the rendered one
    expect(isDefaultChannelDisplay(w, d, [0, 255, 0])).toBe(false);
    expect(isDefaultChannelDisplay(w, { ...d, colour: [0, 255, 0] }, [0, 255, 0])).toBe(true);
    expect(() => channelTransfer(w, d, [0, 0, 0])).toThrow(RangeError);
  });

  it('reads and writes colour-input values', () => {
    expect(toHex([255, 0, 128])).toBe('#ff0080');
    expect(fromHex('#FF0080')).toEqual([255, 0, 128]);
    expect(fromHex('red')).toBeNull();
  });
});

describe('setChannelPoint', () => {
  it('keeps black below white by 1 % of the stored span and inside the slider range', () => {
    const d = defaultChannelDisplay(w);
    expect(channelRange(w)).toEqual({ min: 100, max: 2100, step: 2, minGap: 10 });
    expect(setChannelPoint(w, d, 'black', 400)).toEqual({ blackCounts: 400, whiteCounts: 1100 });
    expect(setChannelPoint(w, d, 'black', 1500)).toEqual({ blackCounts: 1500, whiteCounts: 1510 });
    expect(setChannelPoint(w, d, 'black', -50)).toEqual({ blackCounts: 100, whiteCounts: 1100 });
    expect(setChannelPoint(w, { blackCounts: 600, whiteCounts: 1100 }, 'white', 300)).toEqual({ blackCounts: 290, whiteCounts: 300 });
    expect(setChannelPoint(w, d, 'white', 5000)).toEqual({ blackCounts: 100, whiteCounts: 2100 });
    expect(setChannelPoint(w, d, 'white', Number.NaN)).toBe(d);
  });
});

describe('height filter and labels', () => {
  it('writes a CSS filter only when the height display differs from the rendering', () => {
    expect(heightFilterCss({ brightnessPct: 100, contrastPct: 100 })).toBe('none');
    expect(heightFilterCss({ brightnessPct: 150, contrastPct: 80 })).toBe('brightness(1.5) contrast(0.8)');
    expect(formatCounts(1234.4)).toBe('1234 counts');
    expect(formatCounts(12.34)).toBe('12.3 counts');
  });
});
