/**
 * The words the compare page, its printout and its CSV use for the method, so the three say the same.
 * The reasons are in docs/statistics.md.
 */
export const COMPARISON_METHOD = {
  unit: 'The sample (donor) is the unit: each sample gives one value per marker, its positive fraction over all its fields; vesicles of one sample are not independent, so they are never tested as if they were.',
  fractions:
    "Fractions: Welch's t-test on the samples' empirical logits, log((x + 0.5)/(n − x + 0.5)), where n counts only vesicles measured in that channel (phenotypes: vesicles measured in every channel). " +
    "The group fraction is the back-transformed mean logit (a typical sample); the 95 % interval of the difference is Welch's interval of the logit difference mapped to fractions, so it excludes 0 exactly when p < 0.05. " +
    'p-values are adjusted by Benjamini–Hochberg across all markers and phenotypes shown. ' +
    'Why this test: on simulated cohorts of 3–6 donors per group it keeps its false-positive rate at or below 5 % with unequal vesicle numbers, ' +
    'while a test on pooled vesicles calls about 75 % of groups without any difference "significant", and an exact rank test on the samples cannot reach p < 0.05 with 3 samples per group (docs/statistics.md).',
  sizes: "Sizes: each sample's median equivalent diameter and height (of values rounded to 0.5 nm and 0.1 nm), compared by Welch's t-test; adjusted by Benjamini–Hochberg over the two.",
  perSample: "Per-sample intervals: 95 % Wilson interval on Kish's effective number of vesicles, N / (1 + (m − 1)·ICC), with the intraclass correlation estimated from the sample's fields; with one field the spread between fields is unknown and the plain Wilson interval is shown.",
  fewSamples: 'Fewer than 3 samples in a group: too few for a dependable comparison; with fewer than 2 no test is made.',
  pooled: 'Pooled vesicles per group are shown for looking at only and carry no p-values.',
} as const;
