import { applyAffine } from '../geometry/applyAffine';
import type { ChannelRegistration } from '../geometry/estimateChannelRegistration';
import type { MeasureVesicleResult } from '../heightmap/types';
import type { Point } from '../types';

/**
 * Map objects' AFM centroids into every channel through that channel's own transform.
 *
 * @param objects - measured objects (AFM px)
 * @param channels - per marker, its registration (flFromAfm)
 * @returns per marker, the mapped centres in input order (px of that channel)
 */
export function mapPerChannel(
  objects: readonly MeasureVesicleResult[],
  channels: Readonly<Record<string, ChannelRegistration>>,
): Record<string, Point[]> {
  const out: Record<string, Point[]> = {};
  for (const [marker, c] of Object.entries(channels)) out[marker] = objects.map((o) => applyAffine(c.flFromAfm, o.centroidPx));
  return out;
}
