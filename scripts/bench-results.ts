/**
 * Times the results dashboard queries on a study of 1,000,000 generated vesicles over 50 samples
 * (10 fields each, released). Not a test: `DATABASE_URL=... npx tsx scripts/bench-results.ts`.
 * Use a throw-away database: the script adds a study named "Bench results <time>" and removes it
 * again unless KEEP=1. Target: each query under 300 ms.
 */
import { performance } from 'node:perf_hooks';
import { createDb } from '../src/lib/db/client';
import { getCurrentLinkRunIds, getPanel, getSampleContext, getSampleSelectionFacts } from '../src/lib/db/queries/sampleSelection';
import { getSampleResults } from '../src/lib/db/queries/sampleResults';
import { getComparisonRows } from '../src/lib/db/queries/comparisonInput';
import { getChecklistInput } from '../src/lib/db/queries/checklistInput';
import { listReleasedSamples } from '../src/lib/db/queries/resultListings';
import { pageVesicles } from '../src/lib/db/queries/vesicleExport';
import { buildStudyComparison } from '../src/lib/reporting/buildStudyComparison';
import type { ResultSource } from '../src/lib/reporting/types';
import { summariseLinkRun } from '../src/lib/db/queries/linkRunSummaries';

const VESICLES = Number(process.env.VESICLES ?? 1_000_000);
const SAMPLES = 50;
const FIELDS_PER_SAMPLE = 10;
const TARGET_MS = 300;

const url = process.env.DATABASE_URL;
if (!url) {
  console.error('Set DATABASE_URL to a throw-away database (migrations applied).');
  process.exit(1);
}
const db = createDb(url, 4);
const q = async (text: string, params: unknown[] = []) => (await db.$client.query(text, params)).rows;

async function fill() {
  const t0 = performance.now();
  const [study] = await q(`insert into studies (name) values ($1) returning id`, [`Bench results ${new Date().toISOString()}`]);
  await q(
    `insert into marker_channels (study_id, channel_index, marker) values ($1, 0, 'CD9'), ($1, 1, 'CD63'), ($1, 2, 'CD81')`,
    [study.id],
  );
  await q(
    `insert into samples (study_id, code, group_label)
     select $1, 'BENCH-' || lpad(s::text, 3, '0'), case when s % 2 = 0 then 'group A' else 'group B' end from generate_series(1, $2::int) s`,
    [study.id, SAMPLES],
  );
  await q(
    `insert into fields (sample_id, name, status, afm_pixel_nm)
     select s.id, 'F' || f, 'approved', 3.9 from samples s, generate_series(1, $2::int) f where s.study_id = $1`,
    [study.id, FIELDS_PER_SAMPLE],
  );
  await q(
    `insert into registrations (field_id, version, model, pairs, fl_from_afm, fre_nm)
     select f.id, 1, 'affine', '[]', '[1,0,0,0,1,0]', 10 + random() * 20 from fields f join samples s on s.id = f.sample_id where s.study_id = $1`,
    [study.id],
  );
  await q(
    `insert into link_runs (field_id, settings, summary)
     select f.id, '{}', '{}' from fields f join samples s on s.id = f.sample_id where s.study_id = $1`,
    [study.id],
  );
  // vesicles: the n-th row goes to link run n mod (number of runs); sizes and markers vary with n
  await q(
    `with runs as (
       select lr.id as link_run_id, lr.field_id, f.sample_id, row_number() over (order by lr.id) - 1 as k
         from link_runs lr join fields f on f.id = lr.field_id join samples s on s.id = f.sample_id where s.study_id = $1),
     nr as (select count(*) as c from runs)
     insert into vesicles (link_run_id, field_id, sample_id, index, x_afm_px, y_afm_px, height_nm, mean_height_nm, area_nm2,
                           diameter_nm, volume_nm3, circularity, marker_bits, markers)
     select r.link_run_id, r.field_id, r.sample_id, g.n, (g.n * 7) % 1024, (g.n * 13) % 1024,
            g.h, g.h / 2, pi() * (g.d / 2) ^ 2, g.d, g.h * g.d * g.d / 3, 0.9,
            (case when g.r1 < 0.4 then 1 else 0 end) | (case when g.r2 < 0.3 then 2 else 0 end) | (case when g.r3 < 0.5 then 4 else 0 end),
            '[{"intensity":120,"snr":5,"amplitude":100,"spotDistancePx":0.4},{"intensity":80,"snr":3,"amplitude":70,"spotDistancePx":null},{"intensity":200,"snr":8,"amplitude":180,"spotDistancePx":0.2}]'
       -- random() in a subquery's select list is drawn per row (in a lateral join without references it would be drawn once)
       from (select n, (40 + random() * 160)::real as d, (3 + random() * 40)::real as h, random() as r1, random() as r2, random() as r3
               from generate_series(0, $2::int - 1) n) g
       cross join nr
       join runs r on r.k = g.n % nr.c`,
    [study.id, VESICLES],
  );
  // the linking job summarises each run in the transaction that writes its vesicles; same helper here
  const tSum = performance.now();
  const runs = await q(`select lr.id from link_runs lr join fields f on f.id = lr.field_id join samples s on s.id = f.sample_id where s.study_id = $1`, [study.id]);
  for (const r of runs) await summariseLinkRun(db, r.id);
  const sumMs = performance.now() - tSum;
  console.log(`summarised ${runs.length} link runs in ${(sumMs / 1000).toFixed(1)} s (${(sumMs / runs.length).toFixed(1)} ms per run of ~${Math.round(VESICLES / runs.length)} vesicles)`);
  await q(
    `insert into releases (sample_id, version, link_run_ids)
     select f.sample_id, 1, jsonb_agg(lr.id) from link_runs lr join fields f on f.id = lr.field_id join samples s on s.id = f.sample_id
      where s.study_id = $1 group by f.sample_id`,
    [study.id],
  );
  // what autovacuum would do after a bulk load: statistics and the visibility map for index-only scans
  await q(`vacuum analyze vesicles`);
  await q(`analyze samples, fields, link_runs, releases, registrations, link_run_phenotypes, link_run_histograms, link_run_size_bins`);
  console.log(`filled ${VESICLES.toLocaleString('en')} vesicles in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  return study.id as string;
}

async function time<T>(label: string, fn: () => Promise<T>, repeat = 3): Promise<T> {
  let result: T | undefined;
  const ms: number[] = [];
  for (let i = 0; i < repeat; i++) {
    const t = performance.now();
    result = await fn();
    ms.push(performance.now() - t);
  }
  const best = Math.min(...ms);
  console.log(`${best < TARGET_MS ? 'ok  ' : 'SLOW'} ${label.padEnd(46)} best ${best.toFixed(0).padStart(5)} ms  (runs: ${ms.map((m) => m.toFixed(0)).join(', ')} ms)`);
  return result as T;
}

async function main() {
  const studyId = await fill();
  const [sample] = await q(`select id from samples where study_id = $1 order by code limit 1`, [studyId]);
  const ctx = (await getSampleContext(db, sample.id))!;
  const release = (await getSampleSelectionFacts(db, sample.id))!.latestRelease!;
  const sel = { source: 'released' as const, release, linkRunIds: release.linkRunIds };
  const study = { id: studyId, name: 'bench' };
  const getStudyComparison = async (source: ResultSource, groupA: string | null, groupB: string | null) =>
    buildStudyComparison({ study, source, panel: await getPanel(db, studyId), rows: await getComparisonRows(db, studyId, source), groupA, groupB });
  const admin = { id: '00000000-0000-4000-8000-000000000000', email: 'bench@invalid', name: 'bench', role: 'admin' as const };

  const r = await time('sample results (released, one sample)', () => getSampleResults(db, ctx, sel));
  console.log(`     → ${r.vesicles} vesicles, ${r.fieldsAnalysed} fields, CD9+ ${(100 * (r.markers[0].fraction ?? 0)).toFixed(1)} %`);
  await time('sample results (current link runs)', async () => getSampleResults(db, ctx, { source: 'current', release: null, linkRunIds: await getCurrentLinkRunIds(db, sample.id) }));
  const c0 = await time('study fractions per sample (50 samples)', () => getStudyComparison('released', null, null));
  console.log(`     → ${c0.samples.length} samples, ${c0.samples.reduce((t, s) => t + s.vesicles, 0)} vesicles`);
  const c = await time('study comparison A vs B (samples as the unit)', () => getStudyComparison('released', 'group A', 'group B'));
  console.log(`     → CD9 p = ${c.comparisons[0].pValue?.toPrecision(3)} on ${c.comparisons[0].nSamplesA} + ${c.comparisons[0].nSamplesB} samples, diameter medians p = ${c.sizeComparisons[0].pValue?.toPrecision(3)}`);
  await time('study comparison (unreleased preview)', () => getStudyComparison('current', 'group A', 'group B'));
  await time('reporting checklist input', () => getChecklistInput(db, studyId));
  await time('released samples list', () => listReleasedSamples(db, admin));
  await time('per-vesicle export, first page (5000 rows)', async () => (await pageVesicles(db, release.linkRunIds).next()).value);
  await time('per-vesicle export, whole sample (streamed)', async () => {
    let n = 0;
    for await (const page of pageVesicles(db, release.linkRunIds)) n += page.length;
    return n;
  }, 1);

  if (process.env.KEEP !== '1') await q(`delete from studies where id = $1`, [studyId]);
  await db.$client.end();
}

main().catch(async (e) => {
  console.error(e);
  await db.$client.end();
  process.exit(1);
});
