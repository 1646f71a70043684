import './zodConfig';
import { z } from 'zod';

/** Bounds of k, the calibrated z a vesicle must exceed (dimensionless); the default is 2.58 (one-sided p < 0.005). */
export const POSITIVITY_K_MIN = 0.5;
export const POSITIVITY_K_MAX = 10;
/** Largest hand-set threshold accepted (counts of joint amplitude): far above any 16-bit frame's PSF total. */
export const MANUAL_THRESHOLD_MAX_COUNTS = 1e9;

/** One marker's positivity setting as sent by the study page. */
export const MarkerPositivity = z.object({
  marker: z.string().trim().min(1, 'Name the marker').max(40),
  positivityK: z.number({ error: 'Give k as a number, e.g. 2.58' })
    .min(POSITIVITY_K_MIN, `k must be at least ${POSITIVITY_K_MIN}`)
    .max(POSITIVITY_K_MAX, `k must be at most ${POSITIVITY_K_MAX}`)
    .refine((k) => Math.abs(k * 100 - Math.round(k * 100)) < 1e-6, 'Give k in steps of 0.01, e.g. 2.58'),
  manualThresholdCounts: z.number({ error: 'Give the threshold as a number of counts, or leave it empty' })
    .positive('A hand-set threshold must be above 0 counts; leave it empty to derive the threshold')
    .max(MANUAL_THRESHOLD_MAX_COUNTS, `A hand-set threshold must be at most ${MANUAL_THRESHOLD_MAX_COUNTS} counts`)
    .nullable(),
});

/** The markers whose settings change (others keep theirs); each marker at most once. */
export const PositivityRequest = z.object({
  markers: z.array(MarkerPositivity).min(1, 'Give at least one marker').max(16),
}).refine((b) => new Set(b.markers.map((m) => m.marker.toLowerCase())).size === b.markers.length, { message: 'Each marker may appear once', path: ['markers'] });

/** Fields to link again with the study's current settings. */
export const RelinkRequest = z.object({
  fieldIds: z.array(z.uuid('A field id is malformed')).min(1, 'Choose at least one field').max(500),
});
