import type { FieldStage } from './types';

/**
 * Stages of {@link analyzeField} in run order, for progress bars and timing tables.
 * level: background removal; detect: threshold and watershed; measure: per-vesicle geometry;
 * spots: background correction and spot detection per channel; register: fiducials or automatic pairing;
 * link: photometry, thresholds and calls; summarise: records and counts.
 */
export const fieldStages: readonly FieldStage[] = ['level', 'detect', 'measure', 'spots', 'register', 'link', 'summarise'];
