/**
 * Releases and released results against the running app and its real PostgreSQL. Fields, link runs
 * and vesicles are written straight to the database (the analysis pipeline is tested elsewhere).
 */
import { describe, expect, afterAll } from 'vitest';
import type { Db } from '../../src/lib/db/client';
import type { AppClient } from '../support/client';
import { ROLES, type DemoRole } from '../support/demo';
import { summariseLinkRun, SIZE_BINS_PER_NM } from '../../src/lib/db/queries/linkRunSummaries';
import { getSampleContext, getCurrentLinkRunIds, getPanel } from '../../src/lib/db/queries/sampleSelection';
import { getSampleResults } from '../../src/lib/db/queries/sampleResults';
import { getComparisonRows } from '../../src/lib/db/queries/comparisonInput';
import { buildStudyComparison } from '../../src/lib/reporting/buildStudyComparison';
import { clusteredProportion, compareSampleMedians, welchTTest } from '../../src/lib/analysis/stats';
import { vesicleCsvColumns } from '../../src/lib/analysis/pipeline';
import { test, it } from '../support/fixtures';

const clients = {} as Record<DemoRole, AppClient>;
let db: Db;
let studyId: string;
let otherStudyId: string;
let bigStudyId: string | undefined;
const run = Date.now().toString(36);
const GROUP_A = `rt-a-${run}`;
const GROUP_B = `rt-b-${run}`;
const sampleIds: Record<string, string> = {};
const fieldIds: Record<string, string> = {};

interface V { bits: number; d: number; h: number }

/** 263 vesicles: CD9 (bit 0) on the first 81, CD63 (bit 1) on even indexes, CD81 (bit 2) on multiples of 7. */
const S1_ROWS: V[] = Array.from({ length: 263 }, (_, i) => ({
  bits: (i < 81 ? 1 : 0) | (i % 2 === 0 ? 2 : 0) | (i % 7 === 0 ? 4 : 0),
  d: 50 + ((i * 37) % 150),
  h: 4 + ((i * 13) % 30),
}));
/** n vesicles of which the first k carry `bits`. */
const rowsWith = (n: number, k: number, bits: number): V[] => Array.from({ length: n }, (_, i) => ({ bits: i < k ? bits : 0, d: 80 + (i % 50), h: 10 + (i % 9) }));

async function q<T = Record<string, unknown>>(text: string, params: unknown[] = []): Promise<T[]> {
  return (await db.$client.query(text, params)).rows as T[];
}

async function addSample(studyId: string, code: string, groupLabel: string) {
  const [s] = await q<{ id: string }>(`insert into samples (study_id, code, group_label, isolation_method) values ($1, $2, $3, 'SEC') returning id`, [studyId, code, groupLabel]);
  return s.id;
}

/** A field with a registration, a current link run and its vesicles. */
async function addField(sampleId: string, name: string, status: string, rows: V[], freNm = 12.5) {
  const [f] = await q<{ id: string }>(`insert into fields (sample_id, name, status, afm_pixel_nm) values ($1, $2, $3, 3.9) returning id`, [sampleId, name, status]);
  await q(`insert into registrations (field_id, version, model, pairs, fl_from_afm, fre_nm) values ($1, 1, 'affine', '[{"afm":{"x":0,"y":0},"fl":{"x":0,"y":0}}]', '[1,0,0,0,1,0]', 30)`, [f.id]);
  await q(`insert into registrations (field_id, version, model, pairs, fl_from_afm, fre_nm) values ($1, 2, 'affine', $2, '[1,0,0,0,1,0]', $3)`,
    [f.id, JSON.stringify(Array.from({ length: 5 }, () => ({ afm: { x: 1, y: 1 }, fl: { x: 1, y: 1 } }))), freNm]);
  await relink(f.id, sampleId, rows);
  return f.id;
}

/** A new current link run for the field (the old one stops being current), with these vesicles. */
async function relink(fieldId: string, sampleId: string, rows: V[]) {
  await q(`update link_runs set current = false where field_id = $1`, [fieldId]);
  // made with the field's latest registration, as the linking job records it
  const [lr] = await q<{ id: string }>(
    `insert into link_runs (field_id, registration_id, settings, summary)
     values ($1, (select id from registrations where field_id = $1 order by version desc limit 1), '{"thresholdCountsByMarker":{"CD9":100}}', '{}') returning id`,
    [fieldId],
  );
  await q(
    `insert into vesicles (link_run_id, field_id, sample_id, index, x_afm_px, y_afm_px, height_nm, mean_height_nm, area_nm2, diameter_nm, volume_nm3, circularity, marker_bits, markers)
     select $1, $2, $3, x.idx, 10, 10, x.h, x.h / 2, pi() * (x.d / 2) ^ 2, x.d, x.h * x.d * x.d, 0.9, x.bits,
            '[{"intensity":1,"snr":1,"amplitude":1,"spotDistancePx":null},{"intensity":2,"snr":1,"amplitude":1,"spotDistancePx":null},{"intensity":3,"snr":1,"amplitude":1,"spotDistancePx":null}]'
       from jsonb_to_recordset($4::jsonb) as x(idx int, bits int, d real, h real)`,
    [lr.id, fieldId, sampleId, JSON.stringify(rows.map((r, idx) => ({ idx, ...r })))],
  );
  // what the linking job does in its transaction after writing the vesicles
  await summariseLinkRun(db, lr.id);
  return lr.id;
}

/** Wilson score interval, written out here from the formula in docs/references.md §7 (Newcombe 1998a, method 3). */
function wilson(k: number, n: number) {
  const z = 1.959963984540054; // 97.5% standard normal quantile (from memory; standard tables give 1.96)
  const p = k / n;
  const centre = p + (z * z) / (2 * n);
  const half = z * Math.sqrt((p * (1 - p)) / n + (z * z) / (4 * n * n));
  const den = 1 + (z * z) / n;
  return { lower: (centre - half) / den, upper: (centre + half) / den };
}

const results = (c: AppClient, id: string, query = '') => c.fetch(`/api/samples/${id}/results${query}`);

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  for (const role of ROLES) clients[role] = await signedIn(role);
  db = fileDb;
  [{ id: studyId }] = await q<{ id: string }>(`select id from studies where name like 'Harbour Clinic plasma EV pilot%'`);
  [{ id: otherStudyId }] = await q<{ id: string }>(`insert into studies (name) values ($1) returning id`, [`Results other study ${run}`]);
  sampleIds.s1 = await addSample(studyId, `RT1-${run}`, GROUP_A);
  fieldIds.f1 = await addField(sampleIds.s1, 'F1', 'approved', S1_ROWS.slice(0, 150), 12.5);
  fieldIds.f2 = await addField(sampleIds.s1, 'F2', 'linked', S1_ROWS.slice(150), 18);
  sampleIds.s3 = await addSample(studyId, `RT3-${run}`, GROUP_A);
  await addField(sampleIds.s3, 'F1', 'approved', rowsWith(70, 56, 4));
  sampleIds.s4 = await addSample(studyId, `RT4-${run}`, GROUP_B);
  await addField(sampleIds.s4, 'F1', 'approved', rowsWith(80, 48, 4));
  sampleIds.other = await addSample(otherStudyId, `RTX-${run}`, 'x');
  await addField(sampleIds.other, 'F1', 'approved', rowsWith(10, 5, 1));
});

afterAll(async () => {
  await q(`delete from samples where id = any($1::uuid[])`, [Object.values(sampleIds)]);
  await q(`delete from studies where id = any($1::uuid[])`, [[otherStudyId, bigStudyId].filter(Boolean)]);
});

describe('release', () => {
  it('is refused while a field is not approved, naming how many', async () => {
    const res = await clients.analyst.fetch(`/api/samples/${sampleIds.s1}/release`, { method: 'POST' });
    expect(res.status).toBe(409);
    const body = await res.json();
    expect(body.error).toBe('conflict');
    expect(body.message).toContain('1 of 2 field(s)');
    expect(await q(`select 1 from releases where sample_id = $1`, [sampleIds.s1])).toHaveLength(0);
  });

  it('a collaborator cannot see the unreleased sample (API and page); the lab can preview it', async () => {
    const res = await results(clients.collaborator, sampleIds.s1);
    expect(res.status).toBe(403);
    expect((await res.json()).error).toBe('forbidden');
    expect((await results(clients.collaborator, sampleIds.s1, '?source=current')).status).toBe(403);
    expect((await clients.collaborator.fetch(`/results/${sampleIds.s1}`)).status).toBe(403);
    expect((await clients.collaborator.fetch(`/api/samples/${sampleIds.s1}/vesicles.csv`)).status).toBe(403);
    const lab = await results(clients.biologist, sampleIds.s1);
    expect(lab.status).toBe(404);
    expect((await lab.json()).error).toBe('not_released');
    const preview = await (await results(clients.biologist, sampleIds.s1, '?source=current')).json();
    expect(preview.vesicles).toBe(263);
    expect(preview.release).toBeNull();
  });

  it('works once every field is approved, freezes the current link runs and is audited', async () => {
    await q(`update fields set status = 'approved' where id = $1`, [fieldIds.f2]);
    const res = await clients.analyst.fetch(`/api/samples/${sampleIds.s1}/release`, { method: 'POST' });
    expect(res.status).toBe(201);
    const body = await res.json();
    expect(body.version).toBe(1);
    const current = await q<{ id: string }>(`select lr.id from link_runs lr join fields f on f.id = lr.field_id where f.sample_id = $1 and lr.current order by lr.id`, [sampleIds.s1]);
    expect([...body.linkRunIds].sort()).toEqual(current.map((r) => r.id).sort());
    const audits = await q<{ details: { version: number } }>(`select details from audit_log where action = 'sample.released' and target_id = $1`, [sampleIds.s1]);
    expect(audits.map((a) => a.details.version)).toEqual([1]);
  });
});

describe('released results', () => {
  it('counts and intervals over fields match values computed independently', async () => {
    const res = await results(clients.collaborator, sampleIds.s1);
    expect(res.status).toBe(200);
    const r = await res.json();
    expect(r.source).toBe('released');
    expect(r.release.version).toBe(1);
    expect(r.vesicles).toBe(263);
    expect(r.fieldsAnalysed).toBe(2);
    const expected = [0, 1, 2].map((bit) => S1_ROWS.filter((v) => v.bits & (1 << bit)).length);
    expect(r.markers.map((m: { marker: string; count: number }) => [m.marker, m.count])).toEqual([['CD9', expected[0]], ['CD63', expected[1]], ['CD81', expected[2]]]);
    expect(expected[0]).toBe(81);
    // all 81 CD9+ lie in F1 (81 of 150) and none in F2 (0 of 113): the interval accounts for that spread between
    // fields (Wilson on Kish's effective count), so it is much wider than the pooled Wilson interval 0.2553–0.3662
    // (Newcombe 1998a, Table I; docs/references.md §7) that treats the 263 vesicles as independent
    const perField = (bit: number) => [S1_ROWS.slice(0, 150), S1_ROWS.slice(150)].map((rows) => ({ positive: rows.filter((v) => v.bits & bit).length, total: rows.length }));
    expect(r.fields.map((f: { positives: number[]; measured: number[] }) => [f.positives[0], f.measured[0]])).toEqual([[81, 150], [0, 113]]);
    expect(r.markers[0].designEffect).toBeGreaterThan(10);
    expect(r.markers[0].lower).toBeLessThan(0.2553 - 0.05);
    expect(r.markers[0].upper).toBeGreaterThan(0.3662 + 0.05);
    for (const i of [0, 1, 2]) {
      const c = clusteredProportion(perField(1 << i));
      expect(r.markers[i].fraction).toBeCloseTo(expected[i] / 263, 12);
      expect([r.markers[i].lower, r.markers[i].upper, r.markers[i].designEffect]).toEqual([c.lower, c.upper, c.designEffect]);
    }
    // CD63 (every other vesicle) is spread evenly over the fields: no clustering, the plain Wilson interval
    expect(r.markers[1].designEffect).toBe(1);
    const w = wilson(expected[1], 263);
    expect(r.markers[1].lower).toBeCloseTo(w.lower, 10);
    expect(r.markers[1].upper).toBeCloseTo(w.upper, 10);
    // phenotype combinations
    const combos = new Map<number, number>();
    for (const v of S1_ROWS) combos.set(v.bits, (combos.get(v.bits) ?? 0) + 1);
    expect(Object.fromEntries(r.phenotypes.map((p: { bits: number; count: number }) => [p.bits, p.count]))).toEqual(Object.fromEntries(combos));
    expect(r.phenotypes.find((p: { bits: number }) => p.bits === 7).label).toBe('CD9+ CD63+ CD81+');
    // histograms: 10 nm diameter bins from 0 nm; every vesicle lands in a bin
    const dBins = new Array(50).fill(0);
    for (const v of S1_ROWS) dBins[Math.floor(v.d / 10)]++;
    expect(r.diameter.histogram.counts).toEqual(dBins);
    expect(r.height.histogram.counts.reduce((a: number, b: number) => a + b, 0)).toBe(263);
    // per-field breakdown with the FRE of the registration each released link run was made with
    expect(r.fields.map((f: { name: string; vesicles: number; freNm: number; nbFiducials: number }) => [f.name, f.vesicles, f.freNm, f.nbFiducials]))
      .toEqual([['F1', 150, 12.5, 5], ['F2', 113, 18, 5]]);
    const sortedD = S1_ROWS.map((v) => v.d).sort((a, b) => a - b);
    expect(r.diameter.medianNm).toBe(sortedD[131]);
  });

  it('the page and the CSV exports carry the research-use-only caution', async () => {
    const page = await clients.collaborator.fetch(`/results/${sampleIds.s1}`);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain('Research use only.');
    const csv = await (await clients.collaborator.fetch(`/api/samples/${sampleIds.s1}/results.csv`)).text();
    const lines = csv.trim().split('\r\n');
    expect(lines[0]).toBe('# Research use only. Not for diagnosis or treatment decisions.');
    const cd9 = lines.find((l) => l.includes(',marker_positive,CD9,'))!.split(',');
    expect(cd9.slice(0, 7)).toEqual([`RT1-${run}`, GROUP_A, '1', 'marker_positive', 'CD9', '263', '81']);
    // the interval over fields, as the page shows it (see 'counts and intervals' above)
    const c = clusteredProportion([{ positive: 81, total: 150 }, { positive: 0, total: 113 }]);
    expect(Number(cd9[8])).toBeCloseTo(c.lower!, 12);
    expect(Number(cd9[9])).toBeCloseTo(c.upper!, 12);
    expect(Number(cd9[10])).toBeCloseTo(c.designEffect, 12);
    const ves = await clients.collaborator.fetch(`/api/samples/${sampleIds.s1}/vesicles.csv`);
    expect(ves.headers.get('content-type')).toContain('text/csv');
    const vl = (await ves.text()).trim().split('\r\n');
    expect(vl[0]).toBe('# Research use only. Not for diagnosis or treatment decisions.');
    // the one per-vesicle column set (docs/vesicle-columns.md), then the sample, field and link run
    const header = vl[1].split(',');
    expect(header).toEqual(vesicleCsvColumns(['CD9', 'CD63', 'CD81'], ['sample_code', 'field_id', 'link_run_id']));
    expect(vl).toHaveLength(2 + 263);
    expect(vl.slice(2).filter((l) => l.split(',')[header.indexOf('CD9_call')] === 'positive')).toHaveLength(81);
    expect(vl.slice(2).filter((l) => l.split(',')[header.indexOf('CD9_call')] === 'negative')).toHaveLength(263 - 81);
  });

  it("a collaborator cannot see another study's sample, even released", async () => {
    await q(`insert into releases (sample_id, version, link_run_ids) select $1, 1, jsonb_agg(lr.id) from link_runs lr join fields f on f.id = lr.field_id where f.sample_id = $1`, [sampleIds.other]);
    expect((await results(clients.collaborator, sampleIds.other)).status).toBe(403);
    expect((await clients.collaborator.fetch(`/results/${sampleIds.other}`)).status).toBe(403);
    expect((await clients.collaborator.fetch(`/api/samples/${sampleIds.other}/results.csv`)).status).toBe(403);
    expect((await clients.collaborator.fetch(`/studies/${otherStudyId}/compare`)).status).toBe(403);
    const landing = await (await clients.collaborator.fetch('/results')).text();
    expect(landing).toContain(`RT1-${run}`);
    expect(landing).not.toContain(`RTX-${run}`);
  });

  it('re-analysis after release changes nothing for the collaborator until a new release', async () => {
    await relink(fieldIds.f1, sampleIds.s1, rowsWith(40, 40, 1));
    const before = await (await results(clients.collaborator, sampleIds.s1)).json();
    expect([before.vesicles, before.markers[0].count, before.release.version]).toEqual([263, 81, 1]);
    const preview = await (await results(clients.analyst, sampleIds.s1, '?source=current')).json();
    expect([preview.vesicles, preview.markers[0].count]).toEqual([40 + 113, 40]);
    expect((await clients.biologist.fetch(`/api/samples/${sampleIds.s1}/release`, { method: 'POST' })).status).toBe(201);
    const after = await (await results(clients.collaborator, sampleIds.s1)).json();
    expect([after.vesicles, after.markers[0].count, after.release.version]).toEqual([153, 40, 2]);
  });

  it('two simultaneous releases: exactly one gets the next version, the other 409', async () => {
    const [a, b] = await Promise.all([
      clients.analyst.json(`/api/samples/${sampleIds.s1}/release`, 'POST', { expectedVersion: 2 }),
      clients.biologist.json(`/api/samples/${sampleIds.s1}/release`, 'POST', { expectedVersion: 2 }),
    ]);
    expect([a.status, b.status].sort()).toEqual([201, 409]);
    const loser = a.status === 409 ? a : b;
    expect((await loser.json()).message).toContain('in the meantime');
    expect((await q<{ version: number }>(`select version from releases where sample_id = $1 order by version`, [sampleIds.s1])).map((r) => r.version)).toEqual([1, 2, 3]);
  });
});

const elogit = (x: number, n: number) => Math.log((x + 0.5) / (n - x + 0.5)); // Cox 1970 §3.2
const expit = (x: number) => 1 / (1 + Math.exp(-x));

/** A released sample of one field per entry of `fields` ([n, CD81-positive]). */
async function releasedSample(code: string, group: string, fields: [number, number][]) {
  const id = await addSample(studyId, `${code}-${run}`, group);
  sampleIds[code] = id;
  for (const [k, [n, x]] of fields.entries()) await addField(id, `F${k + 1}`, 'approved', rowsWith(n, x, 4));
  expect((await clients.analyst.fetch(`/api/samples/${id}/release`, { method: 'POST' })).status).toBe(201);
  return id;
}

describe('group comparison', () => {
  it('compares samples, not vesicles; lists released samples only; too few samples are not tested', async () => {
    for (const s of [sampleIds.s3, sampleIds.s4]) {
      expect((await clients.analyst.fetch(`/api/samples/${s}/release`, { method: 'POST' })).status).toBe(201);
    }
    const unreleased = await addSample(studyId, `RT5-${run}`, GROUP_B);
    sampleIds.s5 = unreleased;
    await addField(unreleased, 'F1', 'approved', rowsWith(30, 30, 4));
    // A = RT3 (56/70 CD81+) + RT1 (latest release: no CD81 on the 40 re-linked, 17 of F2's 113); B = RT4 (48/80)
    const res = await clients.collaborator.fetch(`/api/studies/${studyId}/comparison?groupA=${GROUP_A}&groupB=${GROUP_B}`);
    expect(res.status).toBe(200);
    const c = await res.json();
    const codes = c.samples.map((s: { code: string }) => s.code);
    expect(codes).toEqual(expect.arrayContaining([`RT1-${run}`, `RT3-${run}`, `RT4-${run}`]));
    expect(codes).not.toContain(`RT5-${run}`);
    expect([c.samplesPerGroup[GROUP_A], c.samplesPerGroup[GROUP_B]]).toEqual([2, 1]);
    const cd81 = c.comparisons.find((m: { label: string; kind: string }) => m.kind === 'marker' && m.label === 'CD81');
    const f2Cd81 = S1_ROWS.slice(150).filter((v) => v.bits & 4).length;
    expect([cd81.nSamplesA, cd81.nSamplesB, cd81.method, cd81.pValue, cd81.ci95, cd81.fewSamples]).toEqual([2, 1, 'not_tested', null, null, true]);
    // the typical sample: back-transformed mean of the samples' empirical logits
    expect(cd81.fractionA).toBeCloseTo(expit((elogit(56, 70) + elogit(f2Cd81, 153)) / 2), 12);
    expect(cd81.fractionB).toBeCloseTo(expit(elogit(48, 80)), 12);
    // pooled vesicles stay, to look at: counts only, no test, no interval
    const pooled = c.pooled.find((p: { label: string }) => p.label === 'CD81');
    expect([pooled.a.count, pooled.a.total, pooled.b.count, pooled.b.total, pooled.a.lower]).toEqual([56 + f2Cd81, 70 + 153, 48, 80, null]);
    expect(JSON.stringify(c)).not.toMatch(/"test"|fisher|chi_square|mann/i);
  });

  it("with 3 samples a group: Welch on the samples' empirical logits, BH over markers and phenotypes, and the CSV says so", async () => {
    await q(`update samples set group_label = $2 where id = $1`, [sampleIds.s1, `rt-none-${run}`]);
    // A = RT3 (56/70), RT8 (30/60), RT9 (20/50 + 25/50); B = RT4 (48/80), RT6 (40/90), RT7 (10/40): CD81 counts
    await releasedSample('RT8', GROUP_A, [[60, 30]]);
    await releasedSample('RT9', GROUP_A, [[50, 20], [50, 25]]);
    await releasedSample('RT6', GROUP_B, [[90, 40]]);
    await releasedSample('RT7', GROUP_B, [[40, 10]]);
    const c = await (await clients.collaborator.fetch(`/api/studies/${studyId}/comparison?groupA=${GROUP_A}&groupB=${GROUP_B}`)).json();
    const cd81 = c.comparisons.find((m: { label: string; kind: string }) => m.kind === 'marker' && m.label === 'CD81');
    const w = welchTTest([elogit(56, 70), elogit(30, 60), elogit(45, 100)], [elogit(48, 80), elogit(40, 90), elogit(10, 40)]);
    expect([cd81.nSamplesA, cd81.nSamplesB, cd81.method, cd81.fewSamples]).toEqual([3, 3, 'welch_logit', false]);
    expect(cd81.pValue).toBeCloseTo(w.pValue, 12);
    expect(cd81.df).toBeCloseTo(w.df!, 12);
    expect(cd81.difference).toBeCloseTo(expit(w.meanA) - expit(w.meanB), 12);
    expect(cd81.ci95[0] > 0).toBe(cd81.pValue < 0.05);
    // BH over every outcome tested: 3 markers and the phenotype combinations present
    const tested = c.comparisons.filter((m: { pValue: number | null }) => m.pValue !== null);
    expect(tested.length).toBeGreaterThan(3);
    const rank = [...tested].sort((x: { pValue: number }, y: { pValue: number }) => x.pValue - y.pValue).findIndex((m: { key: string }) => m.key === cd81.key) + 1;
    expect(cd81.pAdjusted).toBeGreaterThanOrEqual(cd81.pValue);
    expect(cd81.pAdjusted).toBeLessThanOrEqual(Math.min(1, (tested.length * cd81.pValue) / rank) + 1e-12);
    // RT9's interval over its two fields (20/50 and 25/50)
    const rt9 = c.samples.find((s: { code: string }) => s.code === `RT9-${run}`).markers.find((m: { marker: string }) => m.marker === 'CD81');
    const cl = clusteredProportion([{ positive: 20, total: 50 }, { positive: 25, total: 50 }]);
    expect([rt9.count, rt9.total, rt9.fields, rt9.lower, rt9.upper]).toEqual([45, 100, 2, cl.lower, cl.upper]);

    // the sample view shows where RT8 stands among the 3 released samples of its group (between-sample QC)
    const spread = (await (await results(clients.collaborator, sampleIds.RT8)).json()).groupSpread;
    const cd81Spread = spread.markers.find((m: { marker: string }) => m.marker === 'CD81');
    expect([spread.group, spread.samples, cd81Spread.sampleFraction, cd81Spread.lowestFraction, cd81Spread.highestFraction]).toEqual([GROUP_A, 3, 0.5, 0.45, 0.8]);
    expect(cd81Spread.typicalFraction).toBeCloseTo(expit(w.meanA), 12);

    const csv = await (await clients.collaborator.fetch(`/api/studies/${studyId}/comparison.csv?groupA=${GROUP_A}&groupB=${GROUP_B}`)).text();
    const lines = csv.split('\r\n');
    expect(lines[0]).toBe('# Research use only. Not for diagnosis or treatment decisions.');
    expect(lines[1]).toContain(`${GROUP_A}: 3`);
    expect(csv).toContain('# The sample (donor) is the unit');
    const row = lines.find((l) => l.startsWith(`comparison_marker,${GROUP_A} - ${GROUP_B},,CD81,3,3,`))!.split(',');
    expect(Number(row[14])).toBeCloseTo(w.pValue, 12);
    expect(row[16]).toBe('welch_logit');
    for (const l of lines.filter((x) => x.startsWith('pooled_descriptive,'))) expect(l.split(',')[14]).toBe('');
  });

  it('collaborators cannot ask for unreleased data; a bad query is a 400 with a message', async () => {
    expect((await clients.collaborator.fetch(`/api/studies/${studyId}/comparison?source=current`)).status).toBe(403);
    const bad = await clients.collaborator.fetch(`/api/studies/${studyId}/comparison?groupA=${GROUP_A}`);
    expect(bad.status).toBe(400);
    expect((await bad.json()).message).toContain('groupB');
  });

  it('the compare page shows samples per group, the method and no vesicle-level test', async () => {
    const html = await (await clients.collaborator.fetch(`/studies/${studyId}/compare?groupA=${GROUP_A}&groupB=${GROUP_B}`)).text();
    expect(html).toContain('data-testid="samples-per-group"');
    // React separates text pieces with empty comments in server-rendered HTML
    expect(html.replaceAll('<!-- -->', '')).toContain(`${GROUP_A}: 3 samples`);
    expect(html).toContain('empirical logits');
    // the comparison (not the reporting checklist below it, which cites its sources) names no vesicle-level test
    const comparison = html.slice(html.indexOf('Compare two groups'), html.indexOf('data-testid="checklist"'));
    expect(comparison).toContain('pooled-table');
    expect(comparison).not.toMatch(/Fisher|chi-square|Mann–Whitney|Newcombe/);
  });
});

describe('link run summaries', () => {
  it('give the same sample numbers as aggregates straight over the vesicle rows', async () => {
    const ctx = (await getSampleContext(db, sampleIds.s1))!;
    const ids = await getCurrentLinkRunIds(db, sampleIds.s1);
    const r = await getSampleResults(db, ctx, { source: 'current', release: null, linkRunIds: ids });
    // the aggregates results.ts ran over the vesicles before the summaries existed
    const [direct] = await q<Record<string, number>>(
      `select count(*)::int as n, count(*) filter (where marker_bits & 1 <> 0)::int as p0, count(*) filter (where marker_bits & 2 <> 0)::int as p1,
              count(*) filter (where marker_bits & 4 <> 0)::int as p2 from vesicles where link_run_id = any($1::uuid[])`, [ids]);
    expect(direct.n).toBeGreaterThan(100);
    expect([r.vesicles, ...r.markers.map((m) => m.count)]).toEqual([direct.n, direct.p0, direct.p1, direct.p2]);
    const phen = await q<{ bits: number; n: number }>(
      `select marker_bits as bits, count(*)::int as n from vesicles where link_run_id = any($1::uuid[]) group by 1 order by 2 desc, 1`, [ids]);
    expect(r.phenotypes.map((p) => [p.bits, p.count])).toEqual(phen.map((p) => [p.bits, p.n]));
    const hist = await q<{ m: string; bits: number; b: number; n: number }>(
      `select 'd' as m, marker_bits as bits, width_bucket(diameter_nm, 0, 500, 50) as b, count(*)::int as n from vesicles where link_run_id = any($1::uuid[]) group by 2, 3
       union all
       select 'h', marker_bits, width_bucket(height_nm, 0, 100, 50), count(*)::int from vesicles where link_run_id = any($1::uuid[]) group by 2, 3`, [ids]);
    for (const [m, key] of [['d', 'diameter'], ['h', 'height']] as const) {
      const counts = new Array(50).fill(0);
      const byBits: Record<number, number[]> = {};
      for (const x of hist.filter((y) => y.m === m && y.b >= 1 && y.b <= 50)) {
        counts[x.b - 1] += x.n;
        (byBits[x.bits] ??= new Array(50).fill(0))[x.b - 1] += x.n;
      }
      expect(r[key].histogram.counts).toEqual(counts);
      expect(Object.fromEntries(Object.entries(r[key].byPhenotype).map(([bits, h]) => [bits, h.counts]))).toEqual(byBits);
    }
    const fields = await q<{ n: number; p0: number }>(
      `select count(*)::int as n, count(*) filter (where marker_bits & 1 <> 0)::int as p0 from vesicles v join fields f on f.id = v.field_id
        where link_run_id = any($1::uuid[]) group by f.name, f.id order by f.name, f.id`, [ids]);
    expect(r.fields.map((f) => [f.vesicles, f.positives[0]])).toEqual(fields.map((f) => [f.n, f.p0]));
  });

  it('study comparison: per-sample counts match the vesicles, per-sample medians come from the fine bins within half a bin', async () => {
    // four samples of one field each, non-integer sizes, two channels; not released (the lab's preview)
    [{ id: bigStudyId }] = await q<{ id: string }>(`insert into studies (name) values ($1) returning id`, [`Results summaries ${run}`]);
    await q(`insert into marker_channels (study_id, channel_index, marker) values ($1, 0, 'CD9'), ($1, 1, 'CD63')`, [bigStudyId]);
    const plan: [string, number, number][] = [['BIG-A1', 3100, 0], ['BIG-A2', 2900, 0.37], ['BIG-B1', 2400, 1.9], ['BIG-B2', 3000, 2.3]];
    for (const [code, n, shiftNm] of plan) {
      const sid = await addSample(bigStudyId!, `${code}-${run}`, code.startsWith('BIG-A') ? 'big A' : 'big B');
      sampleIds[code] = sid;
      const [f] = await q<{ id: string }>(`insert into fields (sample_id, name, status, afm_pixel_nm) values ($1, 'F1', 'approved', 3.9) returning id`, [sid]);
      const [lr] = await q<{ id: string }>(`insert into link_runs (field_id, settings, summary) values ($1, '{}', '{}') returning id`, [f.id]);
      await q(
        `insert into vesicles (link_run_id, field_id, sample_id, index, x_afm_px, y_afm_px, height_nm, mean_height_nm, area_nm2, diameter_nm, volume_nm3, circularity, marker_bits, markers)
         select $1, $2, $3, i, 1, 1, (4 + $5::float8 + ((i * 7.77) % 30))::real, 4, 1000, (50 + 3 * $5::float8 + ((i * 37.31) % 140))::real, 1000, 0.9,
                (case when i % 3 = 0 then 1 else 0 end) | (case when i % 5 = 0 then 2 else 0 end), '[{"intensity":1},{"intensity":1}]'
           from generate_series(1, $4::int) i`,
        [lr.id, f.id, sid, n, shiftNm],
      );
      await summariseLinkRun(db, lr.id);
    }
    const study = { id: bigStudyId!, name: 'big' };
    const c = buildStudyComparison({ study, source: 'current', panel: await getPanel(db, bigStudyId!), rows: await getComparisonRows(db, bigStudyId!, 'current'), groupA: 'big A', groupB: 'big B' });
    const direct = await q<{ code: string; n: number; p0: number; p1: number; d: number; h: number }>(
      `select s.code, count(*)::int as n, count(*) filter (where marker_bits & 1 <> 0)::int as p0, count(*) filter (where marker_bits & 2 <> 0)::int as p1,
              percentile_cont(0.5) within group (order by diameter_nm) as d, percentile_cont(0.5) within group (order by height_nm) as h
         from vesicles v join samples s on s.id = v.sample_id where s.study_id = $1 group by 1 order by 1`, [bigStudyId]);
    expect(direct.map((d) => d.n)).toEqual([3100, 2900, 2400, 3000]);
    const byCode = (code: string) => c.samples.find((s) => s.code === code)!;
    for (const d of direct) {
      const s = byCode(d.code);
      expect([s.vesicles, s.markers[0].count, s.markers[0].total, s.markers[1].count]).toEqual([d.n, d.p0, d.n, d.p1]);
      // medians of values rounded to 0.5 nm (diameter) and 0.1 nm (height): within half a bin of the raw median
      expect(Math.abs(s.medianDiameterNm! - d.d)).toBeLessThanOrEqual(0.5 / SIZE_BINS_PER_NM.diameter_nm + 1e-6);
      expect(Math.abs(s.medianHeightNm! - d.h)).toBeLessThanOrEqual(0.5 / SIZE_BINS_PER_NM.height_nm + 1e-6);
    }
    // sizes: the groups' per-sample medians compared (never the 11,400 vesicles)
    const dm = (g: string) => c.samples.filter((s) => s.groupLabel === g).map((s) => s.medianDiameterNm);
    const size = c.sizeComparisons.find((x) => x.measure === 'diameter_nm')!;
    expect([size.nSamplesA, size.nSamplesB]).toEqual([2, 2]);
    expect(size.pValue).toBe(compareSampleMedians(dm('big A'), dm('big B')).pValue);
    expect(c.comparisons.every((m) => m.fewSamples)).toBe(true);
  });
});

/**
 * The app remembers a sample's results per process (src/lib/reporting/sampleResultsCache.ts). Any change to what
 * they are computed from must show on the very next request, whoever made it: here the changes are made straight
 * in the database, behind the app's back, as another process or psql would.
 */
describe('remembered sample results', () => {
  type Breakdown = { fieldId: string; name: string; registrationVersion: number | null; freNm: number | null; vesicles: number };
  const current = async () => {
    const res = await results(clients.analyst, sampleIds.s1, '?source=current');
    expect(res.status).toBe(200);
    return res.json() as Promise<{ vesicles: number; fields: Breakdown[] }>;
  };
  const f1 = (r: { fields: Breakdown[] }) => r.fields.find((f) => f.fieldId === fieldIds.f1)!;

  it('show a renamed field, a new registration and a new link run at once', async () => {
    const first = await current();
    expect(await current()).toEqual(first);
    const name = f1(first).name;

    await q(`update fields set name = $2 where id = $1`, [fieldIds.f1, `${name} renamed`]);
    expect(f1(await current()).name).toBe(`${name} renamed`);
    await q(`update fields set name = $2 where id = $1`, [fieldIds.f1, name]);
    expect(f1(await current()).name).toBe(name);

    const [reg] = await q<{ version: number }>(`select max(version)::int as version from registrations where field_id = $1`, [fieldIds.f1]);
    await q(`insert into registrations (field_id, version, model, pairs, fl_from_afm, fre_nm) values ($1, $2, 'affine', '[]', '[1,0,0,0,1,0]', 123.5)`, [fieldIds.f1, reg.version + 1]);
    const registered = f1(await current());
    expect(registered.registrationVersion).toBe(reg.version + 1);
    expect(registered.freNm).toBeCloseTo(123.5, 3);

    // a new current link run with 7 vesicles instead of F1's 150
    const before = await current();
    await relink(fieldIds.f1, sampleIds.s1, rowsWith(7, 3, 1));
    const after = await current();
    expect(f1(after).vesicles).toBe(7);
    expect(after.vesicles).toBe(before.vesicles - f1(before).vesicles + 7);
  });
});

describe('remembered study comparison', () => {
  type Comparison = { samples: { sampleId: string; groupLabel: string; vesicles: number }[] };
  const compare = async () => {
    const res = await clients.analyst.fetch(`/api/studies/${studyId}/comparison?source=current&groupA=${GROUP_A}&groupB=${GROUP_B}`);
    expect(res.status).toBe(200);
    return res.json() as Promise<Comparison>;
  };
  const s3 = (c: Comparison) => c.samples.find((s) => s.sampleId === sampleIds.s3)!;

  it('shows a sample moved to another group and a new link run at once', async () => {
    const first = await compare();
    expect(await compare()).toEqual(first);
    expect(s3(first).groupLabel).toBe(GROUP_A);
    await q(`update samples set group_label = $2 where id = $1`, [sampleIds.s3, GROUP_B]);
    try {
      expect(s3(await compare()).groupLabel).toBe(GROUP_B);
    } finally {
      await q(`update samples set group_label = $2 where id = $1`, [sampleIds.s3, GROUP_A]);
    }
    expect(s3(await compare()).groupLabel).toBe(GROUP_A);
    const [f] = await q<{ id: string }>(`select id from fields where sample_id = $1`, [sampleIds.s3]);
    await relink(f.id, sampleIds.s3, rowsWith(9, 2, 4));
    expect(s3(await compare()).vesicles).toBe(9);
  });
});
