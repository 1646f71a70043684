/**
 * `npm run compare` and the module it shares with the compare page (compareGroups): the counts table, the
 * result's shape, the messages for bad input, and agreement with the web page's builder.
 */
import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { compareCounts, CountsTableError } from '../../src/lib/reporting/compareCounts';
import { buildStudyComparison } from '../../src/lib/reporting/buildStudyComparison';
import { welchTTest } from '../../src/lib/analysis/stats';

const root = fileURLToPath(new URL('../..', import.meta.url));

/** Invented counts: patients P1 (two fields), P2, P3; controls C1–C3. */
const TABLE = [
  '# invented example',
  'study,sample,field,group,vesicles,CD9,CD63',
  'S1,P1,F1,patient,300,120,40',
  'S1,P1,F2,patient,280,100,38',
  'S1,P2,F1,patient,310,150,50',
  'S1,P3,F1,patient,295,90,41',
  'S1,C1,F1,control,305,60,40',
  'S1,C2,F1,control,290,70,44',
  'S1,C3,F1,control,300,65,39',
].join('\n');

const elogit = (x: number, n: number) => Math.log((x + 0.5) / (n - x + 0.5)); // Cox 1970 §3.2

function run(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    execFile(process.execPath, ['--import', 'tsx', 'scripts/compare.ts', ...args], { cwd: root, timeout: 60_000 }, (error, stdout, stderr) => {
      resolve({ code: error ? (error as { code?: number }).code ?? 1 : 0, stdout, stderr });
    });
  });
}

describe('compareCounts', () => {
  it("sums a sample's fields, then runs Welch's test on the samples' empirical logits", () => {
    const { comparisons } = compareCounts(TABLE, 'patient', 'control');
    expect(comparisons.map((c) => [c.study, c.marker, c.nSamplesA, c.nSamplesB, c.method])).toEqual([
      ['S1', 'CD9', 3, 3, 'welch_logit'], ['S1', 'CD63', 3, 3, 'welch_logit'],
    ]);
    // written out from the rows: P1 = 220 of 580
    const w = welchTTest([elogit(220, 580), elogit(150, 310), elogit(90, 295)], [elogit(60, 305), elogit(70, 290), elogit(65, 300)]);
    const cd9 = comparisons[0];
    expect(cd9.pValue).toBeCloseTo(w.pValue, 12);
    expect(cd9.fractionA).toBeCloseTo(1 / (1 + Math.exp(-w.meanA)), 12);
    expect(cd9.difference).toBeCloseTo(cd9.fractionA! - cd9.fractionB!, 12);
    // Benjamini–Hochberg over the two markers: the larger p stays, the smaller doubles (capped by the larger)
    const p = comparisons.map((c) => c.pValue!);
    const [lo, hi] = [Math.min(...p), Math.max(...p)];
    expect(comparisons.map((c) => c.pAdjusted)).toEqual(p.map((x) => (x === hi ? hi : Math.min(2 * lo, hi))));
    expect(Object.keys(cd9)).toEqual(['study', 'marker', 'groupA', 'groupB', 'nSamplesA', 'nSamplesB', 'fractionA', 'fractionB', 'difference', 'ci95', 'pValue', 'pAdjusted', 'method']);
  });

  it('gives the same numbers as the compare page builder for the same counts (one module)', () => {
    const { comparisons } = compareCounts(TABLE.replace(/^S1,/gm, '').replace('study,', ''), 'patient', 'control');
    expect(comparisons[0].study).toBeNull();
    const rows = TABLE.split('\n').slice(2).map((l) => l.split(','));
    const web = buildStudyComparison({
      study: { id: 's', name: 'S1' }, source: 'released', groupA: 'patient', groupB: 'control',
      panel: [{ channelIndex: 0, marker: 'CD9' }, { channelIndex: 1, marker: 'CD63' }],
      rows: {
        samples: [...new Set(rows.map((r) => r[1]))].map((code) => ({
          sampleId: code, code, groupLabel: rows.find((r) => r[1] === code)![3], releaseVersion: 1, fields: 1, vesicles: 0, medianDiameterNm: null, medianHeightNm: null,
        })),
        markerCounts: rows.flatMap((r) => [0, 1].map((c) => ({ sampleId: r[1], fieldId: r[2], channelIndex: c, measured: Number(r[4]), positive: Number(r[5 + c]) }))),
        phenotypes: [],
      },
    });
    expect(web.samplesPerGroup).toEqual({ control: 3, patient: 3 });
    for (const [i, c] of comparisons.entries()) {
      const m = web.comparisons[i];
      expect([m.label, m.pValue, m.pAdjusted, m.fractionA, m.fractionB, m.difference, m.ci95]).toEqual([c.marker, c.pValue, c.pAdjusted, c.fractionA, c.fractionB, c.difference, c.ci95]);
    }
    // the pooled vesicle fractions are there to look at, with no test and no interval
    expect(web.pooled[0].a).toEqual({ count: 220 + 150 + 90, total: 580 + 310 + 295, fraction: 460 / 1185, lower: null, upper: null });
  });

  it('compares every study on its own', () => {
    const two = TABLE + '\n' + TABLE.split('\n').slice(2).map((l) => l.replace(/^S1,/, 'S2,').replace(/,(\d+),(\d+)$/, (_, a, b) => `,${Math.floor(a / 2)},${b}`)).join('\n');
    const { comparisons } = compareCounts(two, 'patient', 'control');
    expect(comparisons.map((c) => [c.study, c.marker])).toEqual([['S1', 'CD9'], ['S1', 'CD63'], ['S2', 'CD9'], ['S2', 'CD63']]);
    expect(comparisons[2].fractionA).not.toBeCloseTo(comparisons[0].fractionA!, 3);
    expect(comparisons[3].pValue).toBe(comparisons[1].pValue);
  });

  const bad = (table: string, a = 'patient', b = 'control') => {
    try {
      compareCounts(table, a, b);
    } catch (e) {
      expect(e).toBeInstanceOf(CountsTableError);
      return e as CountsTableError;
    }
    throw new Error('accepted a bad table');
  };
  it('names the row of bad input', () => {
    expect(bad('sample,vesicles,CD9\nP1,10,3').message).toContain('no column "group"');
    const above = bad(TABLE.replace('S1,P2,F1,patient,310,150,50', 'S1,P2,F1,patient,310,350,50'));
    expect(above.line).toBe(5);
    expect(above.message).toBe('line 5 (sample P2, field F1): the CD9 count 350 is above vesicles (310).');
    expect(bad(TABLE.replace('305,60,40', '305,6.5,40')).message).toContain('line 7 (sample C1, field F1): the CD9 count is "6.5", not a whole number');
    expect(bad(TABLE.replace('S1,C1,F1,control', 'S1,P1,F3,control')).message).toContain('sample P1 is in group "patient" on line 3');
    expect(bad(TABLE.replace('S1,P1,F2', 'S1,P1,F1')).message).toContain('field "F1" of sample P1 appears twice');
    expect(bad(TABLE, 'patient', 'healthy').message).toBe('study "S1": group "healthy" has no samples (groups in the table: "patient", "control").');
    expect(bad('sample,group,vesicles\nP1,a,3').message).toContain('no marker column');
  });
});

describe('npm run compare', () => {
  const dir = mkdtempSync(join(tmpdir(), 'compare-cli-'));
  it('writes result.json and exits 0', async () => {
    writeFileSync(join(dir, 'counts.csv'), TABLE);
    const r = await run(['--counts', join(dir, 'counts.csv'), '--group-a', 'patient', '--group-b', 'control', '--out', join(dir, 'result.json')]);
    expect(r.code).toBe(0);
    const json = JSON.parse(readFileSync(join(dir, 'result.json'), 'utf8'));
    expect(json.caution).toBe('Research use only. Not for diagnosis or treatment decisions.');
    expect(json.comparisons).toEqual(compareCounts(TABLE, 'patient', 'control').comparisons);
  });
  it('exits 2 with a message naming the row, and writes nothing', async () => {
    writeFileSync(join(dir, 'bad.csv'), TABLE.replace('305,60,40', '305,60,400'));
    const r = await run(['--counts', join(dir, 'bad.csv'), '--group-a', 'patient', '--group-b', 'control', '--out', join(dir, 'bad.json')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('line 7 (sample C1, field F1): the CD63 count 400 is above vesicles (305).');
    expect(() => readFileSync(join(dir, 'bad.json'))).toThrow();
    expect((await run(['--counts', join(dir, 'counts.csv')])).code).toBe(2);
  });
});
