import { describe, expect, it } from 'vitest';
import { callMarkerAmplitudes } from '../callMarkerAmplitudes';
import { controlQuantileThreshold } from '../controlQuantileThreshold';
import { DEFAULT_Z_CRITICAL, describeMarkerCallRule, MARKER_CALL_RULE_SENTENCES } from '../describeMarkerCallRule';
import type { MarkerAmplitude } from '../estimateMarkerAmplitudes';
import { normalUpperTail } from '../../stats/normalUpperTail';

const amp = (amplitudeCounts: number, stdErrCounts = 50, outOfFrame = false): MarkerAmplitude => ({
  amplitudeCounts, unconstrainedAmplitudeCounts: amplitudeCounts, stdErrCounts, snr: amplitudeCounts / stdErrCounts, groupIndex: 0, outOfFrame,
});
const calibration = { medianZ: 0, madZ: 1, nbPlaces: 200, calibrated: true };

describe('normalUpperTail', () => {
  it('matches scipy.stats.norm.sf (scipy 1.x, computed) including the far tail', () => {
    expect(normalUpperTail(1.959964)).toBeCloseTo(0.024999999096, 9);
    expect(normalUpperTail(3.0902)).toBeCloseTo(0.0010001087832, 9);
    // 1 − Φ(6) would lose all but a few digits; Φ(−6) keeps them: 9.865876450377e-10
    expect(normalUpperTail(6) / 9.865876450376946e-10).toBeCloseTo(1, 6);
    expect(normalUpperTail(0)).toBeCloseTo(0.5, 12);
    expect(Number.isNaN(normalUpperTail(Number.NaN))).toBe(true);
  });
});

describe('callMarkerAmplitudes', () => {
  it('gives z = amplitude / SE, the calibrated z, one-sided p and BH q, and leaves out-of-frame positions null', () => {
    // z = 2, 3, 4 under a null of median 0.5, MAD 1.25: calibrated (z − 0.5)/1.25 = 1.2, 2, 2.8
    const rule = { rule: 'camera_noise' as const, zCritical: DEFAULT_Z_CRITICAL, nullCalibration: { ...calibration, medianZ: 0.5, madZ: 1.25 } };
    const calls = callMarkerAmplitudes([amp(100), amp(150), amp(200), amp(Number.NaN, Number.NaN, true)], rule);
    expect(calls.map((c) => c.z)).toEqual([2, 3, 4, null]);
    expect(calls[0].zCalibrated).toBeCloseTo(1.2, 12);
    expect(calls[2].zCalibrated).toBeCloseTo(2.8, 12);
    // p from scipy.stats.norm.sf(1.2) = 0.11506967, sf(2) = 0.02275013, sf(2.8) = 0.00255513 (computed)
    expect(calls[0].pValue).toBeCloseTo(0.11506967, 7);
    expect(calls[1].pValue).toBeCloseTo(0.02275013, 7);
    expect(calls[2].pValue).toBeCloseTo(0.00255513, 7);
    // BH over the three measured ones: q_(i) = min_{j ≥ i} 3·p_(j)/j (Benjamini & Hochberg 1995, docs/references.md §7)
    expect(calls[2].qValue).toBeCloseTo(Math.min(3 * 0.00255513, 1.5 * 0.02275013, 0.11506967), 7);
    expect(calls[1].qValue).toBeCloseTo(Math.min(1.5 * 0.02275013, 0.11506967), 7);
    expect(calls[0].qValue).toBeCloseTo(0.11506967, 7);
    // only calibrated z 2.8 passes 2.58
    expect(calls.map((c) => c.positive)).toEqual([false, false, true, null]);
    expect(calls[3]).toEqual({ z: null, zCalibrated: null, pValue: null, qValue: null, positive: null });
  });

  it('under the control rule needs both: above camera noise and above the control threshold', () => {
    const rule = { rule: 'control' as const, zCritical: DEFAULT_Z_CRITICAL, nullCalibration: calibration, controlKind: 'isotype' as const, thresholdCounts: 300 };
    // z 4 but below the control's 300 counts; z 2 above 300 counts but noisy (SE 200); z 8 and 400 counts
    const calls = callMarkerAmplitudes([amp(200), amp(400, 200), amp(400)], rule);
    expect(calls.map((c) => c.positive)).toEqual([false, false, true]);
    // the manual rule compares the amplitude alone, whatever its z
    const manual = callMarkerAmplitudes([amp(200), amp(400, 200)], { rule: 'manual', thresholdCounts: 300 });
    expect(manual.map((c) => c.positive)).toEqual([false, true]);
  });

  it('says what positive means in one sentence per rule', () => {
    expect(describeMarkerCallRule({ rule: 'camera_noise', zCritical: DEFAULT_Z_CRITICAL, nullCalibration: calibration })).toBe(MARKER_CALL_RULE_SENTENCES.camera_noise);
    expect(describeMarkerCallRule({ rule: 'camera_noise', zCritical: 5, nullCalibration: calibration })).toMatch(/calibrated z > 5\.00/);
    const control = describeMarkerCallRule({ rule: 'control', zCritical: DEFAULT_Z_CRITICAL, nullCalibration: calibration, controlKind: 'secondary_only', thresholdCounts: 412.4 }, 180);
    expect(control).toMatch(/^Positive: above the secondary-only control's non-specific binding/);
    expect(control).toMatch(/412 counts from 180 control vesicles/);
    expect(describeMarkerCallRule({ rule: 'manual', thresholdCounts: 250 })).toMatch(/set by hand \(250 counts\)\.$/);
  });
});

describe('controlQuantileThreshold', () => {
  it('is the 0.99 quantile (Hyndman–Fan definition 7, R quantile() default) per kind, the stricter kind chosen', () => {
    // R: quantile(1:200, 0.99) = 198.01 (h = 199·0.99 = 197.01, between the 198th and 199th values); computed
    const isotype = Array.from({ length: 200 }, (_, i) => i + 1);
    const secondary = isotype.map((v) => v / 2);
    const frozen = structuredClone(isotype);
    const t = controlQuantileThreshold({ isotype, secondary_only: secondary });
    expect(t.byKind.isotype?.thresholdCounts).toBeCloseTo(198.01, 10);
    expect(t.byKind.secondary_only?.thresholdCounts).toBeCloseTo(99.005, 10);
    expect(t.chosen).toMatchObject({ kind: 'isotype', nbControls: 200, quantile: 0.99 });
    expect(isotype).toEqual(frozen);
    // fewer than 100 values (default) set no threshold; non-finite values are skipped
    const few = controlQuantileThreshold({ isotype: [...isotype.slice(0, 99), Number.NaN] });
    expect(few.chosen).toBeNull();
    expect(few.byKind.isotype).toBeUndefined();
    expect(() => controlQuantileThreshold({ isotype }, { quantile: 1 })).toThrow(RangeError);
  });
});
