import type { Affine } from '../types';
import { decomposeAffine } from './decomposeAffine';

/**
 * Plain-language summary of a 2×3 map for the registration panel, e.g.
 * "mirrored; rotated 12.3° clockwise; scale 0.482 × 0.479; shear 0.4°; shifted (+10.0, −3.2) px".
 * Rotation sense is as seen on screen (image y points down); a mirror is described as a flip of
 * the input's y axis done before the rotation (see decomposeAffine).
 *
 * @param transform - 2×3 map with a non-zero determinant
 * @returns one line of words
 */
export function describeAffine(transform: Affine): string {
  const t = decomposeAffine(transform);
  const parts: string[] = [];
  if (t.mirrored) parts.push('mirrored');
  const rot = Math.abs(t.rotationDeg);
  if (rot < 0.05) parts.push('not rotated');
  else parts.push(`rotated ${rot.toFixed(1)}° ${t.rotationDeg > 0 ? 'clockwise' : 'anticlockwise'}`);
  parts.push(`scale ${t.scaleXPxPerPx.toPrecision(3)} × ${t.scaleYPxPerPx.toPrecision(3)}`);
  parts.push(`shear ${t.shearDeg.toFixed(1)}°`);
  const signed = (v: number) => `${v < 0 ? '−' : '+'}${Math.abs(v).toFixed(1)}`;
  parts.push(`shifted (${signed(t.translationXPx)}, ${signed(t.translationYPx)}) px`);
  return parts.join('; ');
}
