import type { Point } from '../../../lib/analysis/types';

/** A shown layer as the read-out needs it: its size and where its stored values are. */
export interface ReadoutLayer {
  layer: string;
  /** Name in the read-out (a channel's marker). */
  name: string;
  widthPx: number;
  heightPx: number;
  /** Full pixels per value of the block-averaged read-out, and the read-out's width (0: no read-out). */
  valuesFactor: number;
  valuesWidth: number;
}

/**
 * The text under the viewer for the pointer at an image pixel: the position in µm and in pixels, and each shown
 * layer's stored value there (height in nm, channels in counts), from the downsampled read-outs.
 *
 * @param p - image pixel under the pointer ((0, 0) = centre of the top-left pixel)
 * @param layers - the shown layers; the first gives the image size
 * @param values - read-outs loaded so far, by layer (a layer without one shows no value)
 * @param pixelNm - pixel size of the shown image (nm)
 */
export function readoutText(p: Point, layers: readonly ReadoutLayer[], values: Readonly<Record<string, Float32Array>>, pixelNm: number): string {
  const first = layers[0];
  const { x, y } = p;
  // pixel i covers [i − 0.5, i + 0.5)
  if (!first || x < -0.5 || y < -0.5 || x >= first.widthPx - 0.5 || y >= first.heightPx - 0.5) return 'Outside the image';
  const pos = `x ${((x * pixelNm) / 1000).toFixed(3)} µm, y ${((y * pixelNm) / 1000).toFixed(3)} µm (pixel ${Math.round(x)}, ${Math.round(y)})`;
  const parts = layers.flatMap((l) => {
    const vals = values[l.layer];
    if (!vals || !l.valuesWidth) return [];
    const val = vals[Math.floor(Math.round(y) / l.valuesFactor) * l.valuesWidth + Math.floor(Math.round(x) / l.valuesFactor)];
    if (val === undefined) return [];
    return [l.layer === 'height' ? `height ${val.toFixed(2)} nm` : `${l.name} ${Math.round(val)} counts`];
  });
  return [pos, ...parts].join(' · ');
}
