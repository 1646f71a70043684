/**
 * Control-sample specificity thresholds read from stored calls in the real PostgreSQL (the job's query): per marker
 * and per control kind, the 0.99 quantile of control vesicles' joint amplitudes (Hyndman–Fan definition 7,
 * docs/references.md §6); buffer-only and ordinary samples never contribute; vesicles outside a frame (null amplitude)
 * are not control values; the stricter kind is chosen. Rows are written straight to the database.
 */
import { describe, expect } from 'vitest';
import type { Db } from '../../src/lib/db/client';
import { controlThresholds } from '../../src/lib/jobs/controlThresholds';
import { test, it } from '../support/fixtures';

let db: Db;
let studyId: string;
const run = Date.now().toString(36);

async function q<T = Record<string, unknown>>(text: string, params: unknown[] = []): Promise<T[]> {
  return (await db.$client.query(text, params)).rows as T[];
}

/** A sample of this control kind with one field, a current link run and vesicles whose CD9/CD63/CD81 amplitudes are given. */
async function addControl(kind: string, amplitudes: (number | null)[][], current = true) {
  const [s] = await q<{ id: string }>(`insert into samples (study_id, code, control_kind) values ($1, $2, $3) returning id`, [studyId, `CT-${kind}-${run}-${Math.random().toString(36).slice(2, 6)}`, kind]);
  const [f] = await q<{ id: string }>(`insert into fields (sample_id, name) values ($1, 'F1') returning id`, [s.id]);
  const [lr] = await q<{ id: string }>(`insert into link_runs (field_id, settings, summary, current) values ($1, '{}', '{}', $2) returning id`, [f.id, current]);
  await q(
    `insert into vesicles (link_run_id, field_id, sample_id, index, x_afm_px, y_afm_px, height_nm, mean_height_nm, area_nm2, diameter_nm, volume_nm3, circularity, markers)
     select $1, $2, $3, x.idx, 10, 10, 20, 10, 5000, 80, 100000, 0.9, x.markers
       from jsonb_to_recordset($4::jsonb) as x(idx int, markers jsonb)`,
    [lr.id, f.id, s.id, JSON.stringify(amplitudes.map((a, idx) => ({ idx, markers: a.map((amplitude) => ({ amplitude, z: null })) })))],
  );
}

// a database of this file's own (rows are written straight to it; nothing goes through the app server), dropped after the file
test.beforeAll(async ({ ownDb }) => {
  db = ownDb.db;
  [{ id: studyId }] = await q<{ id: string }>(`insert into studies (name) values ($1) returning id`, [`Control thresholds ${run}`]);
  // isotype: CD9 amplitudes 1..200 (two samples of 100), CD63 1..200 doubled, CD81 only 50 values (too few)
  const iso = (from: number) => Array.from({ length: 100 }, (_, i) => [from + i, 2 * (from + i), i < 25 ? from + i : null]);
  await addControl('isotype', iso(1));
  await addControl('isotype', iso(101));
  // secondary-only: CD9 amplitudes 0.5..100 (lower), CD63 1000..1199 (higher: the stricter kind for CD63)
  await addControl('secondary_only', Array.from({ length: 200 }, (_, i) => [(i + 1) / 2, 1000 + i, null]));
  // never control values: buffer-only and ordinary samples, and a control run that is no longer current
  await addControl('buffer_only', Array.from({ length: 300 }, () => [1e6, 1e6, 1e6]));
  await addControl('none', Array.from({ length: 300 }, () => [1e6, 1e6, 1e6]));
  await addControl('isotype', Array.from({ length: 300 }, () => [1e6, 1e6, 1e6]), false);
});

describe('controlThresholds', () => {
  it('gives the 0.99 quantile per kind, chooses the stricter kind, and ignores buffer-only, ordinary and old runs', async () => {
    const t = await controlThresholds(db, studyId, ['CD9', 'CD63', 'CD81']);
    // R: quantile(1:200, 0.99) = 198.01; quantile((1:200)/2, 0.99) = 99.005; quantile(1000:1199, 0.99) = 1197.01;
    // quantile(2*(1:200), 0.99) = 396.02 (computed from definition 7)
    expect(t.CD9).toMatchObject({ kind: 'isotype', nbControls: 200, quantile: 0.99 });
    expect(t.CD9.thresholdCounts).toBeCloseTo(198.01, 6);
    expect(t.CD9.byKind.secondary_only?.thresholdCounts).toBeCloseTo(99.005, 6);
    expect(t.CD63).toMatchObject({ kind: 'secondary_only', nbControls: 200 });
    expect(t.CD63.thresholdCounts).toBeCloseTo(1197.01, 6);
    expect(t.CD63.byKind.isotype?.thresholdCounts).toBeCloseTo(396.02, 6);
    // CD81: 50 isotype values (the others are outside that frame) are too few for a 0.99 quantile
    expect(t.CD81).toBeUndefined();
  });
});
