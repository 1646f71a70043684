import { linkVesicles, type LinkVesiclesOptions, type LinkVesiclesResult, type VesicleLink } from '../linking/linkVesicles';
import type { FluorescenceSpot } from '../fluorescence/types';
import type { Point, Raster } from '../types';

/** Options of {@link linkPerChannel}: those of linkVesicles, with other light sources placed per channel. */
export interface LinkPerChannelOptions extends LinkVesiclesOptions {
  /** Other sources (beads) per marker (px of that channel); overrides `otherSourcesPx` for the markers it names. @default {} */
  otherSourcesPxByMarker?: Readonly<Record<string, readonly Point[]>>;
}

/**
 * Link vesicles to every channel at each channel's own positions (the AFM centroids mapped by that channel's
 * transform, chromatic shift included): linkVesicles channel by channel, then one result with phenotypes in channel
 * order. The joint fit, the error model and the calls are linkVesicles', per channel as before.
 *
 * @param vesiclesFlByMarker - per marker, every vesicle's centre in that channel (px), same length and order for all
 * @param spotsByMarker - detected spots per marker (px)
 * @param rastersPerChannel - frames per marker (counts); key order sets the phenotype order
 * @param options - see {@link LinkPerChannelOptions}
 * @returns the same shape as linkVesicles
 * @throws RangeError when a marker has no positions or the position lists differ in length
 */
export function linkPerChannel(
  vesiclesFlByMarker: Readonly<Record<string, readonly Point[]>>,
  spotsByMarker: Readonly<Record<string, readonly FluorescenceSpot[]>>,
  rastersPerChannel: Readonly<Record<string, Raster>>,
  options: LinkPerChannelOptions,
): LinkVesiclesResult {
  const { otherSourcesPxByMarker = {}, ...linkOptions } = options;
  const markers = Object.keys(rastersPerChannel);
  const n = markers.length ? vesiclesFlByMarker[markers[0]]?.length ?? -1 : 0;
  for (const m of markers) {
    if (!vesiclesFlByMarker[m] || vesiclesFlByMarker[m].length !== n) throw new RangeError(`vesiclesFlByMarker.${m} must list the same ${n} vesicles as the first channel`);
  }
  const parts = markers.map((m) =>
    linkVesicles(vesiclesFlByMarker[m], { [m]: spotsByMarker[m] ?? [] }, { [m]: rastersPerChannel[m] }, {
      ...linkOptions, otherSourcesPx: otherSourcesPxByMarker[m] ?? linkOptions.otherSourcesPx,
    }));
  const vesicles: VesicleLink[] = Array.from({ length: Math.max(0, n) }, (_, i) => {
    const channels: VesicleLink['channels'] = Object.fromEntries(markers.map((m, k) => [m, parts[k].vesicles[i].channels[m]]));
    const calls = markers.map((m) => channels[m].positive);
    return {
      index: i,
      outOfFrame: calls.some((c) => c === null),
      channels,
      phenotype: markers.map((m, k) => `${m}${calls[k] === null ? '?' : calls[k] ? '+' : '-'}`).join(' '),
      nbPositive: calls.filter((c) => c === true).length,
    };
  });
  const merge = <K extends 'positiveByMarker' | 'nbMeasuredByMarker' | 'nbOtherSpotSourcesByMarker' | 'unmatchedSpotsByMarker'>(key: K) =>
    Object.assign({}, ...parts.map((p) => p[key])) as LinkVesiclesResult[K];
  return {
    ...(parts[0] ?? {}),
    vesicles,
    markers,
    nbVesicles: Math.max(0, n),
    nbOutOfFrame: vesicles.filter((v) => v.outOfFrame).length,
    nbVesiclesWithoutMarker: vesicles.filter((v) => !v.outOfFrame && v.nbPositive === 0).length,
    positiveByMarker: merge('positiveByMarker'),
    nbMeasuredByMarker: merge('nbMeasuredByMarker'),
    nbOtherSpotSourcesByMarker: merge('nbOtherSpotSourcesByMarker'),
    unmatchedSpotsByMarker: merge('unmatchedSpotsByMarker'),
  };
}
