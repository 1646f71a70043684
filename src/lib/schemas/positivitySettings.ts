/**
 * Positivity settings of a study's markers (k, the calibrated z to exceed, or a threshold set by hand) and what a link run
 * recorded it used, so linking, the study page and the review panel read one form. Pure: no I/O, safe in islands.
 */
import { DEFAULT_Z_CRITICAL } from '../analysis/linking/describeMarkerCallRule';

/**
 * How a marker was called: 'camera_noise' (calibrated z above k: detected above camera and background noise),
 * 'control' (that, and the joint amplitude above the control's non-specific binding) or 'manual' (a threshold set by
 * hand). Runs linked before calls had an error model used mean + k SD of control vesicles' or empty places' amplitudes.
 */
export type ThresholdRule = 'manual' | 'camera_noise' | 'control' | 'control_mean_k_sd' | 'background_mean_k_sd';

/**
 * k (the calibrated z a vesicle must exceed) when nothing else is set: the analysis core's default, 2.58 (one-sided
 * p < 0.005), so the study page, linking and the command line use one number. Panels set up before this default
 * keep the 3 they were given.
 */
export const DEFAULT_POSITIVITY_K = DEFAULT_Z_CRITICAL;

/** k of link runs saved before per-marker settings, which did not record one: they all used 3. */
const LEGACY_RUN_K = 3;

/** One marker's settings as kept on the panel. */
export interface MarkerPositivitySetting {
  marker: string;
  /** k: the calibrated z a vesicle must exceed (dimensionless, 0.5–10 in steps of 0.01). */
  positivityK: number;
  /** Threshold set by hand (joint amplitude, counts); replaces the derived one when not null. */
  manualThresholdCounts: number | null;
}

/** What one link run used for one marker. */
export interface MarkerPositivityUsed {
  rule: ThresholdRule;
  /** null for a threshold set by hand (no k is involved). */
  k: number | null;
  /** The threshold compared with the joint amplitude (counts); null when the run did not record it. */
  thresholdCounts: number | null;
  /** The run's own sentence for what "positive" means for this marker; absent for older runs. */
  sentence?: string | null;
}

/**
 * k as kept in the database (a 4-byte real, so 3.1 reads as 3.0999999) back to its 0.01 step.
 * @param k - stored k
 */
export const roundK = (k: number) => Math.round(k * 100) / 100;

/** Words for a rule, for people (thresholds in counts of joint amplitude). */
export function describeRule(used: MarkerPositivityUsed): string {
  if (used.sentence) return used.sentence;
  if (used.rule === 'manual') return 'set by hand';
  if (used.rule === 'camera_noise') return `detected above camera noise (calibrated z above ${used.k})`;
  if (used.rule === 'control') return `detected above camera noise (z above ${used.k}) and above the control's non-specific binding`;
  return used.rule === 'control_mean_k_sd' ? `mean + ${used.k} SD of control-sample vesicles` : `mean + ${used.k} SD of empty places of the frame`;
}

/**
 * What a link run's saved settings say it used for `marker`. Runs saved before per-marker settings carry one k for
 * all markers and a sentence per marker; they are read as k (3 when absent) with the control or background rule.
 * @returns null when the run did not link this marker
 */
export function positivityUsed(settings: Record<string, unknown> | null | undefined, marker: string): MarkerPositivityUsed | null {
  if (!settings) return null;
  const markers = settings.markers as string[] | undefined;
  if (Array.isArray(markers) && !markers.includes(marker)) return null;
  const rules = (settings.thresholdRule ?? {}) as Record<string, unknown>;
  const ks = settings.k;
  const thresholds = (settings.thresholds ?? {}) as Record<string, unknown>;
  const raw = rules[marker];
  const rule: ThresholdRule = raw === 'manual' || raw === 'camera_noise' || raw === 'control' || raw === 'control_mean_k_sd' || raw === 'background_mean_k_sd'
    ? raw
    : typeof raw === 'string' && /control/i.test(raw) ? 'control_mean_k_sd' : 'background_mean_k_sd';
  const k = rule === 'manual' ? null
    : typeof ks === 'number' ? ks
      : ks && typeof ks === 'object' && typeof (ks as Record<string, unknown>)[marker] === 'number' ? (ks as Record<string, number>)[marker]
        : LEGACY_RUN_K;
  const t = thresholds[marker];
  const sentence = ((settings.ruleSentence ?? {}) as Record<string, unknown>)[marker];
  return { rule, k, thresholdCounts: typeof t === 'number' ? t : null, ...(typeof sentence === 'string' ? { sentence } : {}) };
}

/**
 * Markers whose current setting differs from what a run used: a hand-set threshold that was not used (or another
 * value), or a derived threshold with another k. Whether controls or empty places gave it is not a setting.
 * @returns marker names, in panel order; empty when the run matches the settings
 */
export function markersLinkedWithOtherSettings(settings: Record<string, unknown> | null | undefined, panel: readonly MarkerPositivitySetting[]): string[] {
  return panel.filter((p) => {
    const used = positivityUsed(settings, p.marker);
    if (!used) return true;
    if (p.manualThresholdCounts != null) {
      return used.rule !== 'manual' || used.thresholdCounts == null
        || Math.abs(used.thresholdCounts - p.manualThresholdCounts) > 1e-6 * Math.max(1, Math.abs(p.manualThresholdCounts));
    }
    return used.rule === 'manual' || used.k == null || Math.abs(used.k - roundK(p.positivityK)) > 1e-9;
  }).map((p) => p.marker);
}
