/**
 * A stored vesicle row back as the analysis core's VesicleRecord, so every per-vesicle export (the lab's field or
 * sample export, the collaborator's release export, the command line) writes the one column set of
 * analysis/pipeline/vesicleColumns (docs/vesicle-columns.md) with the same cells.
 */
import type { VesicleMarkerCall, VesicleRecord } from '../../analysis/pipeline/types';
import type { CapSizeFlag } from '../../analysis/heightmap/types';
import type { VesicleMarkerJson } from '../schema';

/** The columns of a vesicles row the record needs (Drizzle's row type satisfies it). */
export interface StoredVesicle {
  index: number; xAfmPx: number; yAfmPx: number; xFlPx: number | null; yFlPx: number | null;
  heightNm: number; meanHeightNm: number; areaNm2: number; diameterNm: number; volumeNm3: number; circularity: number;
  capRadiusNm: number | null; capHeightNm: number | null; contactAngleDeg: number | null; capVolumeNm3: number | null; sphereDiameterNm: number | null;
  capFlag: string | null; split: boolean; outOfFrame: boolean; markerBits: number; measuredBits: number; phenotype: string;
  markers: VesicleMarkerJson[];
}

/**
 * @param v - the stored row
 * @param markers - the run's markers in channel order (the jsonb array is indexed by channel)
 * @returns the record; a channel the vesicle was not measured in has a null call
 */
export function vesicleRecordFromRow(v: StoredVesicle, markers: readonly string[]): VesicleRecord {
  const calls: Record<string, VesicleMarkerCall> = {};
  markers.forEach((m, i) => {
    const c = v.markers[i];
    // runs linked before calls were stored: the measured bits and the positive bits say it
    const measured = c?.call ? c.call !== 'not_measured' : (v.measuredBits & (1 << i)) !== 0;
    calls[m] = {
      intensityCounts: c?.intensity ?? null, intensitySnr: c?.snr ?? null, amplitudeCounts: c?.amplitude ?? null,
      unconstrainedAmplitudeCounts: c?.amplitudeUnconstrained ?? null, amplitudeSeCounts: c?.se ?? null, z: c?.z ?? null,
      zCalibrated: c?.zCalibrated ?? null, pValue: c?.p ?? null, qValue: c?.q ?? null, spotDistancePx: c?.spotDistancePx ?? null,
      positive: !measured ? null : c?.call ? c.call === 'positive' : (v.markerBits & (1 << i)) !== 0,
    };
  });
  const hasCap = v.capRadiusNm != null && v.contactAngleDeg != null && v.sphereDiameterNm != null;
  return {
    index: v.index, xAfmPx: v.xAfmPx, yAfmPx: v.yAfmPx, xFlPx: v.xFlPx ?? NaN, yFlPx: v.yFlPx ?? NaN,
    heightNm: v.heightNm, footprintDiameterNm: v.diameterNm, volumeNm3: v.volumeNm3, areaNm2: v.areaNm2, circularity: v.circularity, meanHeightNm: v.meanHeightNm,
    cap: hasCap ? {
      baseRadiusNm: v.capRadiusNm!, heightNm: v.capHeightNm ?? NaN, contactAngleDeg: v.contactAngleDeg!, volumeNm3: v.capVolumeNm3 ?? NaN, volumeEquivalentDiameterNm: v.sphereDiameterNm!,
    } : null,
    capFlag: (v.capFlag as CapSizeFlag | null) ?? null, split: v.split, outOfFrame: v.outOfFrame, phenotype: v.phenotype, markers: calls,
  };
}
