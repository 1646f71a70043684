import { describe, expect, it } from 'vitest';
import { describeRule, markersLinkedWithOtherSettings, positivityUsed, roundK } from '../positivitySettings';

const panel = (over: Record<string, { k?: number; manual?: number | null }> = {}) =>
  ['CD9', 'CD63', 'CD81'].map((m) => ({ marker: m, positivityK: over[m]?.k ?? 3, manualThresholdCounts: over[m]?.manual ?? null }));

// a run saved before per-marker settings: one k, a sentence per marker
const oldRun = {
  markers: ['CD9', 'CD63', 'CD81'], k: 3, thresholds: { CD9: 410.5, CD63: 388, CD81: 402 },
  thresholdRule: { CD9: 'mean + 3 SD of the joint amplitudes of 120 control-sample vesicles', CD63: 'mean + 3 SD of joint amplitudes fitted at 200 empty places of the frame', CD81: 'x' },
};
const newRun = {
  markers: ['CD9', 'CD63', 'CD81'], k: { CD9: null, CD63: 5, CD81: 3 }, thresholds: { CD9: 600, CD63: 512.25, CD81: 402 },
  thresholdRule: { CD9: 'manual', CD63: 'background_mean_k_sd', CD81: 'control_mean_k_sd' },
};

describe('positivity settings of link runs', () => {
  it('reads runs saved before per-marker settings as k = 3 with the control or background rule', () => {
    expect(positivityUsed(oldRun, 'CD9')).toEqual({ rule: 'control_mean_k_sd', k: 3, thresholdCounts: 410.5 });
    expect(positivityUsed(oldRun, 'CD63')).toEqual({ rule: 'background_mean_k_sd', k: 3, thresholdCounts: 388 });
    expect(positivityUsed(oldRun, 'CD47')).toBeNull();
  });

  it('reads per-marker runs as saved', () => {
    expect(positivityUsed(newRun, 'CD9')).toEqual({ rule: 'manual', k: null, thresholdCounts: 600 });
    expect(positivityUsed(newRun, 'CD63')).toEqual({ rule: 'background_mean_k_sd', k: 5, thresholdCounts: 512.25 });
    expect(describeRule(positivityUsed(newRun, 'CD63')!)).toBe('mean + 5 SD of empty places of the frame');
    expect(describeRule(positivityUsed(newRun, 'CD81')!)).toBe('mean + 3 SD of control-sample vesicles');
  });

  it('lists the markers whose setting differs from what the run used', () => {
    expect(markersLinkedWithOtherSettings(oldRun, panel())).toEqual([]);
    expect(markersLinkedWithOtherSettings(oldRun, panel({ CD63: { k: 5 } }))).toEqual(['CD63']);
    expect(markersLinkedWithOtherSettings(oldRun, panel({ CD81: { manual: 402 } }))).toEqual(['CD81']);
    expect(markersLinkedWithOtherSettings(newRun, panel({ CD9: { manual: 600 }, CD63: { k: 5 } }))).toEqual([]);
    // another hand-set value, or back to a derived threshold
    expect(markersLinkedWithOtherSettings(newRun, panel({ CD9: { manual: 601 }, CD63: { k: 5 } }))).toEqual(['CD9']);
    expect(markersLinkedWithOtherSettings(newRun, panel({ CD63: { k: 5 } }))).toEqual(['CD9']);
    // a k read back from a 4-byte real still matches its 0.1 step
    expect(markersLinkedWithOtherSettings(newRun, panel({ CD9: { manual: 600 }, CD63: { k: Math.fround(5) } }))).toEqual([]);
    expect(roundK(Math.fround(3.1))).toBe(3.1);
    expect(markersLinkedWithOtherSettings(null, panel())).toEqual(['CD9', 'CD63', 'CD81']);
  });
});
