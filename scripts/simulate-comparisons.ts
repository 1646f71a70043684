/**
 * Simulated cohorts for the group comparison (not a test; prints figures for docs/statistics.md):
 *   npx tsx scripts/simulate-comparisons.ts [--studies 2000] [--seed 12] [--field-sd 0.2] [--max-donors 6] [--uneven 1]
 * Each simulated study has 3–6 donors per group, 2–3 fields per donor and about 300 vesicles per field
 * (Poisson). A donor's marker-positive fraction is expit(μ + donor effect + field effect) with between-donor
 * SD 0.5 and between-field SD 0.2 (--field-sd) on the logit scale, μ = logit(0.30). Under "null" both groups share μ;
 * under "difference" group A's μ is higher by 1.0 (0.30 → 0.54) or 0.6 (0.30 → 0.44) on the logit scale.
 * Four tests are run on every study:
 *   - the product's comparison (compareGroups, the module the web page, its CSV and npm run compare use),
 *   - a per-sample Welch test on empirical-logit fractions written out here independently (the reference),
 *   - an exact rank-sum test on per-sample fractions,
 *   - the pooled vesicle test the compare page used before (Fisher/chi-square on the groups' pooled counts).
 */
import os from 'node:os';
import { performance } from 'node:perf_hooks';
import jstat from 'jstat';
import { clusteredProportion, compareGroups, compareProportions, mannWhitneyU, wilsonInterval } from '../src/lib/analysis/stats';
import { createRng } from '../src/lib/analysis/synthetic/random';

const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? Number(process.argv[i + 1]) : fallback;
};
const STUDIES = arg('studies', 2000);
const SEED = arg('seed', 12);
const BASE_LOGIT = Math.log(0.3 / 0.7);
const DONOR_SD = 0.5;
const FIELD_SD = arg('field-sd', 0.2);
const VESICLES_PER_FIELD = 300;
/** --uneven 1: each field's mean vesicle count drawn from 50–600 instead of 300 (unequal vesicle numbers). */
const UNEVEN = arg('uneven', 0) === 1;
const MAX_DONORS = arg('max-donors', 6);
const ALPHA = 0.05;

const rng = createRng(SEED);
const int = (lo: number, hi: number) => lo + Math.floor(rng.uniform() * (hi - lo + 1));
const expit = (x: number) => 1 / (1 + Math.exp(-x));

function binomial(n: number, p: number): number {
  let k = 0;
  for (let i = 0; i < n; i++) if (rng.uniform() < p) k++;
  return k;
}

/** A donor's true fraction: the mean of expit(donor logit + field effect) over fields (midpoint rule over ±6 SD). */
function donorFraction(donorLogit: number): number {
  let sum = 0;
  let weight = 0;
  for (let i = -600; i <= 600; i++) {
    const z = i / 100;
    const w = Math.exp(-z * z / 2);
    sum += w * expit(donorLogit + FIELD_SD * z);
    weight += w;
  }
  return sum / weight;
}

const coverage = { clustered: 0, naive: 0, donors: 0 };

/** One donor: its fields' counts, summed (the sample's positive and total vesicles); scores the per-sample intervals. */
function donor(meanLogit: number) {
  const donorLogit = meanLogit + DONOR_SD * rng.normal();
  const fields: { positive: number; total: number }[] = [];
  for (let f = int(2, 3); f > 0; f--) {
    const n = rng.poisson(UNEVEN ? int(50, 600) : VESICLES_PER_FIELD);
    fields.push({ positive: binomial(n, expit(donorLogit + FIELD_SD * rng.normal())), total: n });
  }
  const positive = fields.reduce((t, f) => t + f.positive, 0);
  const total = fields.reduce((t, f) => t + f.total, 0);
  const truth = donorFraction(donorLogit);
  const c = clusteredProportion(fields);
  const w = wilsonInterval(positive, total);
  coverage.donors++;
  if (c.lower! <= truth && truth <= c.upper!) coverage.clustered++;
  if (w.lower <= truth && truth <= w.upper) coverage.naive++;
  return { positive, total };
}

/** Reference: Welch's test on empirical logits, written out from the textbook formulas (not the product's code). */
function referenceWelchLogit(a: { positive: number; total: number }[], b: { positive: number; total: number }[]) {
  const logit = (s: { positive: number; total: number }) => Math.log((s.positive + 0.5) / (s.total - s.positive + 0.5));
  const stats = (xs: number[]) => {
    const m = xs.reduce((t, x) => t + x, 0) / xs.length;
    return { m, v: xs.reduce((t, x) => t + (x - m) ** 2, 0) / (xs.length - 1), n: xs.length };
  };
  const A = stats(a.map(logit));
  const B = stats(b.map(logit));
  const se2 = A.v / A.n + B.v / B.n;
  const df = se2 ** 2 / ((A.v / A.n) ** 2 / (A.n - 1) + (B.v / B.n) ** 2 / (B.n - 1));
  return 2 * jstat.jStat.studentt.cdf(-Math.abs((A.m - B.m) / Math.sqrt(se2)), df);
}

function scenario(name: string, shiftLogit: number) {
  const hits = { product: 0, reference: 0, rankSum: 0, pooled: 0 };
  let agree = 0;
  let covered = 0;
  // the typical donor's fraction per group, which the product's difference estimates
  const trueDifference = expit(BASE_LOGIT + shiftLogit) - expit(BASE_LOGIT);
  const t0 = performance.now();
  for (let s = 0; s < STUDIES; s++) {
    const a = Array.from({ length: int(3, MAX_DONORS) }, () => donor(BASE_LOGIT + shiftLogit));
    const b = Array.from({ length: int(3, MAX_DONORS) }, () => donor(BASE_LOGIT));
    const product = compareGroups({
      groupA: 'A', groupB: 'B', outcomes: [{ key: 'M', label: 'M', kind: 'marker' }],
      samples: [...a.map((c, i) => ({ sample: `a${i}`, group: 'A', counts: [c] })), ...b.map((c, i) => ({ sample: `b${i}`, group: 'B', counts: [c] }))],
    }).outcomes[0];
    if (product.ci95![0] <= trueDifference && trueDifference <= product.ci95![1]) covered++;
    const reference = referenceWelchLogit(a, b);
    if (Math.abs(product.pValue! - reference) < 1e-9) agree++;
    const frac = (x: { positive: number; total: number }) => x.positive / x.total;
    const rankSum = mannWhitneyU(a.map(frac), b.map(frac), { exact: 'auto' }).pValue;
    const sum = (xs: typeof a, k: 'positive' | 'total') => xs.reduce((t, x) => t + x[k], 0);
    const pooled = compareProportions(sum(a, 'positive'), sum(a, 'total'), sum(b, 'positive'), sum(b, 'total')).pValue;
    if (product.pValue! < ALPHA) hits.product++;
    if (reference < ALPHA) hits.reference++;
    if (rankSum < ALPHA) hits.rankSum++;
    if (pooled < ALPHA) hits.pooled++;
  }
  const ms = performance.now() - t0;
  const rate = (k: number) => {
    const p = k / STUDIES;
    return `${p.toFixed(3)} ± ${(1.96 * Math.sqrt((p * (1 - p)) / STUDIES)).toFixed(3)}`;
  };
  console.log(`\n${name} (logit shift ${shiftLogit}; ${STUDIES} studies, ${(ms / 1000).toFixed(1)} s)`);
  console.log(`  rate of p < ${ALPHA} (± 1.96 simulation SE):`);
  console.log(`  product (compareGroups: Welch on per-sample empirical logits) ${rate(hits.product)}`);
  console.log(`  reference per-sample Welch on logit fractions (written out)   ${rate(hits.reference)}   (p identical to the product's in ${agree} of ${STUDIES})`);
  console.log(`  exact rank-sum on per-sample fractions                        ${rate(hits.rankSum)}`);
  console.log(`  pooled vesicles, Fisher/chi-square (the old page)             ${rate(hits.pooled)}`);
  console.log(`  product's 95% interval of the difference covers the true ${trueDifference.toFixed(3)}: ${rate(covered)}`);
}

console.log(`simulate-comparisons: ${new Date().toISOString()}, ${os.cpus()[0]?.model ?? 'unknown CPU'} (${os.cpus().length} cores), Node ${process.version}, seed ${SEED}`);
console.log(`cohorts: 3–${MAX_DONORS} donors per group, 2–3 fields per donor, ${UNEVEN ? 'Poisson(50–600, drawn per field)' : `Poisson(${VESICLES_PER_FIELD})`} vesicles per field, fraction 0.30, between-donor SD ${DONOR_SD} and between-field SD ${FIELD_SD} (logit)`);
scenario('null: no true difference (false-positive rate)', 0);
scenario('difference: 0.30 vs 0.44 (power)', 0.6);
scenario('difference: 0.30 vs 0.54 (power)', 1.0);
const cov = (k: number) => `${(k / coverage.donors).toFixed(3)} ± ${(1.96 * Math.sqrt((k / coverage.donors) * (1 - k / coverage.donors) / coverage.donors)).toFixed(3)}`;
console.log(`\nper-sample 95% intervals over ${coverage.donors} simulated donors, coverage of the donor's true fraction:`);
console.log(`  design-effect Wilson over fields (clusteredProportion) ${cov(coverage.clustered)}`);
console.log(`  plain Wilson on pooled vesicles                        ${cov(coverage.naive)}`);
