import { benjaminiHochberg } from '../stats/benjaminiHochberg';
import { normalUpperTail } from '../stats/normalUpperTail';
import type { MarkerAmplitude } from './estimateMarkerAmplitudes';
import type { MarkerCallRule } from './types';

/** One position's test and call in one channel; null values where the position lies outside the frame. */
export interface MarkerAmplitudeCall {
  /** amplitudeCounts / SE (dimensionless). */
  readonly z: number | null;
  /** (z − null median)/null MAD: N(0, 1) at empty places of this frame (dimensionless). */
  readonly zCalibrated: number | null;
  /** One-sided P(Z ≥ zCalibrated) under the calibrated null. */
  readonly pValue: number | null;
  /** Benjamini–Hochberg q over the positions measured in this frame. */
  readonly qValue: number | null;
  /** The call under the rule; null outside the frame. */
  readonly positive: boolean | null;
}

/**
 * Tests and calls the joint amplitudes of one channel under one rule (see {@link MarkerCallRule}): z = NNLS amplitude
 * over its SE, calibrated by the frame's null (median and MAD of z at empty places), a one-sided p-value, a BH q-value
 * within the frame, and the call. The camera-noise rule calls on calibrated z above a fixed z_crit rather than on
 * q: BH's cut-off loosens as the share of labelled vesicles grows (it controls the false discovery rate, not the false
 * positive rate), so two samples of different purity would be called with different cut-offs; a fixed z_crit keeps
 * the false-positive rate on unlabelled vesicles at the stated level in every sample.
 *
 * @param amplitudes - joint amplitudes from {@link estimateMarkerAmplitudes}; not modified
 * @param rule - the marker's rule
 * @returns one call per amplitude, same order
 * @see Benjamini Y, Hochberg Y. JRSS B 57:289–300, 1995 (docs/references.md §7).
 */
export function callMarkerAmplitudes(amplitudes: readonly MarkerAmplitude[], rule: MarkerCallRule): MarkerAmplitudeCall[] {
  const cal = rule.nullCalibration ?? { medianZ: 0, madZ: 1 };
  const tests = amplitudes.map((a) => {
    if (a.outOfFrame) return null;
    const z = a.stdErrCounts > 0 ? a.amplitudeCounts / a.stdErrCounts : Number.NaN;
    const zCalibrated = (z - cal.medianZ) / cal.madZ;
    return { z, zCalibrated, p: normalUpperTail(zCalibrated) };
  });
  const measured = tests.flatMap((t, i) => (t && Number.isFinite(t.p) ? [i] : []));
  const q = benjaminiHochberg(measured.map((i) => tests[i]!.p));
  const qByIndex = new Map(measured.map((i, j) => [i, q[j]]));
  return amplitudes.map((a, i) => {
    const t = tests[i];
    if (!t) return { z: null, zCalibrated: null, pValue: null, qValue: null, positive: null };
    const aboveNoise = Number.isFinite(t.zCalibrated) && rule.rule !== 'manual' && t.zCalibrated > rule.zCritical;
    const positive = rule.rule === 'manual'
      ? a.amplitudeCounts > rule.thresholdCounts
      : rule.rule === 'control' ? aboveNoise && a.amplitudeCounts > rule.thresholdCounts : aboveNoise;
    const fin = (v: number) => (Number.isFinite(v) ? v : null);
    return { z: fin(t.z), zCalibrated: fin(t.zCalibrated), pValue: fin(t.p), qValue: qByIndex.get(i) ?? null, positive };
  });
}
