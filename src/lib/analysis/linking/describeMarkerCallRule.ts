import type { MarkerCallRule, ThresholdControlKind } from './types';

/**
 * Calibrated z a vesicle must exceed to be called above camera noise: 2.58, the one-sided standard-normal quantile
 * of p = 0.005 (2.5758) rounded up to the 0.01 step of the study's positivity settings, so the web app and the
 * command line use the same number (one-sided p = 0.0049). About 1 unlabelled vesicle in 200 per marker is called
 * positive by noise alone, half the 1 % false-positive rate a reviewer would accept; a stricter 3.09 (p = 0.001)
 * misses a quarter of the dimmest labelled vesicles (300–400 photons on 100 photons/px, z ≈ 3–4), see
 * docs/marker-calls.md.
 */
export const DEFAULT_Z_CRITICAL = 2.58;

/** Quantile of the control vesicles' joint amplitudes that a vesicle must exceed under the control rule. */
export const DEFAULT_CONTROL_QUANTILE = 0.99;

/** Words for the control kinds, for sentences shown to people. */
const KIND_WORDS: Record<ThresholdControlKind, string> = { isotype: 'isotype', secondary_only: 'secondary-only' };

/**
 * What "positive" means for each rule, one sentence each, for the UI, exports and docs. The control sentence names
 * the kind; the numbers come from the rule.
 */
export const MARKER_CALL_RULE_SENTENCES = {
  camera_noise: 'Positive: detected above camera noise: the marker light fitted at the vesicle lies above the camera and background noise of its own frame (calibrated one-sided test, p < 0.005).',
  control: 'Positive: above the {kind} control\'s non-specific binding: the marker light fitted at the vesicle exceeds what 99 % of the {kind} control\'s vesicles carry, and is detected above camera noise.',
  manual: 'Positive: the marker light fitted at the vesicle exceeds a threshold set by hand.',
} as const;

/**
 * The one-sentence meaning of a marker's rule, with its numbers.
 *
 * @param rule - the rule used for the marker
 * @param nbControls - number of control vesicles behind a control threshold (count), if known
 * @returns a sentence for people
 */
export function describeMarkerCallRule(rule: MarkerCallRule, nbControls?: number): string {
  const p = (z: number) => (z === DEFAULT_Z_CRITICAL ? 'p < 0.005' : `calibrated z > ${z.toFixed(2)}`);
  if (rule.rule === 'camera_noise') return MARKER_CALL_RULE_SENTENCES.camera_noise.replace('p < 0.005', p(rule.zCritical));
  if (rule.rule === 'manual') return `${MARKER_CALL_RULE_SENTENCES.manual.slice(0, -1)} (${Math.round(rule.thresholdCounts)} counts).`;
  const kind = KIND_WORDS[rule.controlKind];
  return MARKER_CALL_RULE_SENTENCES.control.replaceAll('{kind}', kind).replace(
    'carry,', `carry (${Math.round(rule.thresholdCounts)} counts${nbControls ? ` from ${nbControls} control vesicles` : ''}),`,
  );
}
