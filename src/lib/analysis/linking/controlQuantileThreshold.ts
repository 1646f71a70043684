import type { ThresholdControlKind } from './types';
import { DEFAULT_CONTROL_QUANTILE } from './describeMarkerCallRule';

/** Options of {@link controlQuantileThreshold}. */
export interface ControlQuantileThresholdOptions {
  /** Quantile of the control amplitudes that sets the threshold (0–1). @default 0.99 */
  quantile?: number;
  /**
   * Fewest control values a kind needs to set a threshold (count); with 100 values the 0.99 quantile lies between
   * the two largest, with fewer it is little more than the maximum.
   * @default 100
   */
  minControls?: number;
}

/** One control kind's threshold. */
export interface ControlKindThreshold {
  readonly kind: ThresholdControlKind;
  /** The quantile of the kind's control amplitudes (counts). */
  readonly thresholdCounts: number;
  readonly nbControls: number;
  readonly quantile: number;
}

/** Result of {@link controlQuantileThreshold}. */
export interface ControlQuantileThresholdResult {
  /** Every kind with enough values. */
  readonly byKind: Partial<Record<ThresholdControlKind, ControlKindThreshold>>;
  /** The kind used: the highest threshold of those with enough values (the stricter control); null when none. */
  readonly chosen: ControlKindThreshold | null;
}

/**
 * Specificity thresholds of one marker from control samples' vesicles, per control kind (isotype, secondary-only;
 * buffer-only controls carry no antibody and so never set one): the given quantile of the control vesicles' joint
 * amplitudes. A high quantile rather than mean + k·SD because non-specific binding is skewed: most control vesicles
 * carry nothing and a few carry bound antibody, so the SD describes neither; "above 99 % of control vesicles" states the
 * specificity directly. When both kinds are present the stricter (higher) threshold is used, and both are reported.
 *
 * @param valuesByKind - control vesicles' joint amplitudes per kind (counts); not modified; non-finite values skipped
 * @param options - see {@link ControlQuantileThresholdOptions}
 * @returns the thresholds per kind and the one chosen
 * @throws RangeError for a quantile outside (0, 1)
 * @see Hyndman RJ, Fan Y. Sample quantiles in statistical packages. Am Stat 50:361–365, 1996 (definition 7, R's default).
 */
export function controlQuantileThreshold(
  valuesByKind: Readonly<Partial<Record<ThresholdControlKind, readonly number[]>>>,
  options: ControlQuantileThresholdOptions = {},
): ControlQuantileThresholdResult {
  const { quantile = DEFAULT_CONTROL_QUANTILE, minControls = 100 } = options;
  if (!(quantile > 0 && quantile < 1)) throw new RangeError(`quantile must lie in (0, 1), got ${quantile}`);
  const byKind: Partial<Record<ThresholdControlKind, ControlKindThreshold>> = {};
  let chosen: ControlKindThreshold | null = null;
  for (const kind of ['isotype', 'secondary_only'] as const) {
    const values = (valuesByKind[kind] ?? []).filter(Number.isFinite).sort((a, b) => a - b);
    if (values.length < Math.max(2, minControls)) continue;
    // Hyndman–Fan definition 7: h = (n − 1)·p, linear between the order statistics around h
    const h = (values.length - 1) * quantile;
    const lo = Math.floor(h);
    const thresholdCounts = values[lo] + (h - lo) * ((values[lo + 1] ?? values[lo]) - values[lo]);
    const t = { kind, thresholdCounts, nbControls: values.length, quantile };
    byKind[kind] = t;
    if (!chosen || thresholdCounts > chosen.thresholdCounts) chosen = t;
  }
  return { byKind, chosen };
}
