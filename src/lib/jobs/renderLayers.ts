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

/** Height map through the viridis colour map, range from robust percentiles (nm). */
export async function renderHeightLayer(st: Storage, fieldId: string, levelled: Raster) {
  const { min: low, max: high } = contrastFromPercentiles(levelled.data, 0.5, 99.8);
  const minNm = Math.min(low, 0);
  const maxNm = Math.max(high, minNm + 1);
  const map = colourMapHeight(levelled, { minNm, maxNm });
  const prefix = await upload(st, fieldId, 'height', map.rgb, levelled.width, levelled.height);
  return { prefix, display: { unit: 'nm', minNm, maxNm, colourBar: map.colourBar } };
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
  return { prefix, display: { unit: 'counts', lowCounts: low, highCounts: high, colour: `rgb(${r},${g},${b})` } };
}
