/** Renders a field's layers into Deep Zoom pyramids in S3. */
import type { Storage } from '../storage/client';
import { putBytes } from '../storage/objects';
import { tilePrefix } from '../storage/keys';
import { buildDeepZoom, colourMapHeight, contrastFromPercentiles } from '../imaging';
import type { Raster } from '../analysis/types';

export const TILE_SIZE = 254;
export const TILE_OVERLAP = 1;

async function upload(st: Storage, fieldId: string, layer: string, rgb: Uint8Array, width: number, height: number) {
  const prefix = tilePrefix(fieldId, layer);
  const dz = buildDeepZoom(rgb, width, height, { tileSize: TILE_SIZE, overlap: TILE_OVERLAP, format: 'png', concurrency: 4 });
  await putBytes(st, `${prefix}.dzi`, dz.dziXml, 'application/xml');
  for await (const t of dz.tiles()) await putBytes(st, `${prefix}_files/${t.path}`, t.bytes, 'image/png');
  return prefix;
}

/**
 * A float copy of a layer, box-downsampled so its longer side is at most `maxSide`, for the
 * viewer's cursor read-out (value under the cursor without decoding the original in the browser).
 */
export function downsampleValues(r: Raster, maxSide = 1024) {
  const f = Math.max(1, Math.ceil(Math.max(r.width, r.height) / maxSide));
  const w = Math.ceil(r.width / f);
  const h = Math.ceil(r.height / f);
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      let sum = 0;
      let n = 0;
      for (let yy = y * f; yy < Math.min(r.height, (y + 1) * f); yy++) {
        for (let xx = x * f; xx < Math.min(r.width, (x + 1) * f); xx++) {
          sum += r.data[yy * r.width + xx];
          n++;
        }
      }
      out[y * w + x] = sum / n;
    }
  }
  return { data: out, width: w, height: h, factor: f };
}

async function uploadValues(st: Storage, fieldId: string, layer: string, r: Raster) {
  const v = downsampleValues(r);
  await putBytes(st, `${tilePrefix(fieldId, layer)}.f32`, new Uint8Array(v.data.buffer), 'application/octet-stream');
  return { valuesWidth: v.width, valuesHeight: v.height, valuesFactor: v.factor };
}

/**
 * Height map through the viridis colour map. The range comes from percentiles of the pixels outside
 * `excluded` (the fiducial beads' regions), so a few tall beads do not squash the vesicles into the
 * darkest colours; beads saturate at the top colour.
 */
export async function renderHeightLayer(st: Storage, fieldId: string, levelled: Raster, excluded?: (i: number) => boolean) {
  const shown = excluded ? levelled.data.filter((_, i) => !excluded(i)) : levelled.data;
  const { min: low, max: high } = contrastFromPercentiles(shown, 0.5, 99.9);
  const minNm = Math.min(low, 0);
  const maxNm = Math.max(high, minNm + 1);
  const map = colourMapHeight(levelled, { minNm, maxNm });
  const prefix = await upload(st, fieldId, 'height', map.rgb, levelled.width, levelled.height);
  const values = await uploadValues(st, fieldId, 'height', levelled);
  return { prefix, display: { unit: 'nm', minNm, maxNm, colourBar: map.colourBar, ...values } };
}

/** Pseudo-colour for an emission wavelength (nm): a rough visible-spectrum hue, common practice for display. */
export function emissionColour(emissionNm: number | null | undefined): [number, number, number] {
  const w = emissionNm ?? 550;
  if (w < 500) return [80, 140, 255];
  if (w < 560) return [60, 230, 90];
  if (w < 620) return [255, 170, 40];
  return [255, 60, 200];
}

/** A fluorescence channel with automatic contrast from percentiles, tinted by its emission colour. */
export async function renderChannelLayer(st: Storage, fieldId: string, index: number, frame: Raster, emissionNm?: number | null) {
  const { min: low, max: high } = contrastFromPercentiles(frame.data, 0.5, 99.9);
  const span = Math.max(high - low, 1e-6);
  const [r, g, b] = emissionColour(emissionNm);
  const rgb = new Uint8Array(frame.width * frame.height * 3);
  for (let i = 0; i < frame.data.length; i++) {
    const v = Math.min(1, Math.max(0, (frame.data[i] - low) / span));
    rgb[i * 3] = r * v;
    rgb[i * 3 + 1] = g * v;
    rgb[i * 3 + 2] = b * v;
  }
  const prefix = await upload(st, fieldId, `ch${index}`, rgb, frame.width, frame.height);
  const values = await uploadValues(st, fieldId, `ch${index}`, frame);
  return { prefix, display: { unit: 'counts', lowCounts: low, highCounts: high, colour: `rgb(${r},${g},${b})`, ...values } };
}
