/**
 * Linking through the job worker on a demo field whose truth is known: marker calls against the
 * generator's truth, idempotent re-runs, streamed CSV, and approval with optimistic concurrency.
 */
import { describe, expect } from 'vitest';
import { eq, count } from 'drizzle-orm';
import type { AppClient } from '../support/client';
import { demoField } from '../support/demoField';
import { makeDemoPair } from '../../fixtures/demoScene';
import { DEMO_FIELDS } from '../../scripts/seedDemoFields';
import { applyAffine, fitAffine } from '../../src/lib/analysis/geometry';
import type { Db } from '../../src/lib/db/client';
import { vesicles, linkRuns } from '../../src/lib/db/schema';
import { test, it } from '../support/fixtures';

let analyst: AppClient;
let admin: AppClient;
let db: Db;
let fieldId: string;
const spec = DEMO_FIELDS.find((f) => f.code === 'HCP-ISO')!;
const truth = makeDemoPair({ seed: spec.seed, positiveFractions: spec.positiveFractions });

async function waitFor(status: string, timeoutMs = 90_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const f = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field;
    if (f.status === status && (f.progress?.fraction ?? 1) >= 1) return f;
    if (f.failureReason) throw new Error(f.failureReason);
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error(`field did not reach ${status}`);
}

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  analyst = await signedIn('analyst');
  admin = await signedIn('admin');
  db = fileDb;
  fieldId = await demoField(db, spec.code);
  const beads = truth.truth.filter((t) => t.kind === 'bead');
  const pairs = beads.map((b) => ({ afm: { x: b.xPx, y: b.yPx }, fl: applyAffine(truth.flFromAfm, { x: b.xPx, y: b.yPx }) }));
  const versions = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions;
  const save = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: versions[0]?.version ?? 0, pairs });
  expect(save.status).toBe(201);
});

describe('linking a field', () => {
  it('links every vesicle with calls that match the truth, and a re-run leaves the same rows', async () => {
    expect((await analyst.fetch(`/api/fields/${fieldId}/link`, { method: 'POST' })).status).toBe(202);
    await waitFor('linked');
    const page = await (await analyst.fetch(`/api/vesicles?fieldId=${fieldId}&pageSize=500`)).json();
    const nbTrueVesicles = truth.truth.filter((t) => t.kind === 'vesicle').length;
    expect(page.total).toBeGreaterThanOrEqual(Math.floor(0.95 * nbTrueVesicles));
    expect(page.total).toBeLessThanOrEqual(nbTrueVesicles);
    expect(page.markers).toEqual(['CD9', 'CD63', 'CD81']);

    // match each row to the nearest true vesicle and compare calls (generator positives carry ≥ 350 photons over 100/px)
    let right = 0;
    let total = 0;
    for (const r of page.rows) {
      const t = truth.truth.map((tt, i) => ({ i, d: Math.hypot(tt.xPx - r.xAfmPx, tt.yPx - r.yAfmPx) })).sort((a, b) => a.d - b.d)[0];
      expect(t.d).toBeLessThan(1);
      for (let m = 0; m < 3; m++) {
        if (r.outOfFrame) continue;
        total++;
        if (r.phenotype.split(' ')[m]?.endsWith('+') === truth.calls[t.i][m]) right++;
      }
    }
    expect(right / total).toBeGreaterThanOrEqual(0.95);

    const rowsBefore = (await db.select({ n: count() }).from(vesicles).where(eq(vesicles.fieldId, fieldId)))[0].n;
    expect((await analyst.fetch(`/api/fields/${fieldId}/link`, { method: 'POST' })).status).toBe(202);
    await new Promise((r) => setTimeout(r, 1000));
    await waitFor('linked');
    const rowsAfter = (await db.select({ n: count() }).from(vesicles).where(eq(vesicles.fieldId, fieldId)))[0].n;
    expect(rowsAfter).toBe(rowsBefore);
    expect((await db.select({ n: count() }).from(linkRuns).where(eq(linkRuns.fieldId, fieldId)))[0].n).toBe(1);
  });

  it('pages, sorts and filters on the server', async () => {
    const all = await (await analyst.fetch(`/api/vesicles?fieldId=${fieldId}&sort=heightNm&dir=desc&pageSize=10`)).json();
    expect(all.rows).toHaveLength(10);
    for (let i = 1; i < 10; i++) expect(all.rows[i - 1].heightNm).toBeGreaterThanOrEqual(all.rows[i].heightNm);
    const tall = await (await analyst.fetch(`/api/vesicles?fieldId=${fieldId}&minHeightNm=20&pageSize=500`)).json();
    expect(tall.rows.every((r: { heightNm: number }) => r.heightNm >= 20)).toBe(true);
    expect(tall.total).toBeLessThan(all.total);
    const bad = await analyst.fetch(`/api/vesicles?fieldId=${fieldId}&sort=password`);
    expect(bad.status).toBe(400);
  });

  it('exports the per-vesicle CSV with unit-suffixed columns and the identifiers', async () => {
    const res = await analyst.fetch(`/api/vesicles/export.csv?fieldId=${fieldId}`);
    expect(res.headers.get('content-type')).toContain('text/csv');
    const lines = (await res.text()).trim().split('\n');
    expect(lines[0]).toMatch(/^# Research use only/);
    const header = lines[1].split(',');
    // the one per-vesicle column set (docs/vesicle-columns.md), then the identifiers
    for (const c of ['x_afm_px', 'y_afm_px', 'height_nm', 'footprint_diameter_nm', 'cap_base_diameter_nm', 'cap_volume_nm3', 'cap_flag', 'split',
      'CD9_amplitude_counts', 'CD9_amplitude_se_counts', 'CD9_z', 'CD9_q', 'CD9_call', 'CD63_call', 'CD81_call', 'field_id', 'sample_code', 'transform_version']) expect(header).toContain(c);
    const total = (await (await analyst.fetch(`/api/vesicles?fieldId=${fieldId}`)).json()).total;
    expect(lines.length - 2).toBe(total);
    const cells = lines.slice(2).map((l) => l.split(','));
    expect(cells[0][header.indexOf('field_id')]).toBe(fieldId);
    for (const r of cells) expect(['positive', 'negative', 'not_measured']).toContain(r[header.indexOf('CD9_call')]);
    // the z column carries the stored per-call z (2 decimals), and z = amplitude / SE
    const page = (await (await analyst.fetch(`/api/vesicles?fieldId=${fieldId}&pageSize=500`)).json()) as { rows: { index: number; markers: { z?: number | null; amplitude: number | null; se?: number | null }[] }[] };
    const byIndex = new Map(cells.map((r) => [Number(r[header.indexOf('vesicle')]), r]));
    let compared = 0;
    for (const row of page.rows) {
      const m = row.markers[0];
      if (m?.z == null || m.se == null || m.amplitude == null) continue;
      const cell = byIndex.get(row.index)!;
      expect(Number(cell[header.indexOf('CD9_z')])).toBeCloseTo(m.z, 2);
      expect(m.z).toBeCloseTo(m.amplitude / m.se, 3);
      compared++;
    }
    expect(compared).toBeGreaterThan(10);
  });

  it('links with the saved transform: a registration saved as a similarity is used as saved, not refitted as an affine', async () => {
    // the fluorescence picks get a 2 % shear, which a similarity cannot follow, so the similarity the analyst saves and
    // an affine refit of the same pairs place vesicles apart (up to ~1 px at the frame's edges)
    const beads = truth.truth.filter((t) => t.kind === 'bead');
    const exact = beads.map((b) => applyAffine(truth.flFromAfm, { x: b.xPx, y: b.yPx }));
    const meanY = exact.reduce((a, p) => a + p.y, 0) / exact.length;
    const pairs = beads.map((b, i) => ({ afm: { x: b.xPx, y: b.yPx }, fl: { x: exact[i].x + 0.02 * (exact[i].y - meanY), y: exact[i].y } }));
    const versions = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions;
    const save = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: versions[0].version, model: 'similarity', pairs });
    expect(save.status).toBe(201);
    const [reg] = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions;
    expect(reg.model).toBe('similarity');
    expect((await analyst.fetch(`/api/fields/${fieldId}/link`, { method: 'POST' })).status).toBe(202);
    await waitFor('linked');

    const [run] = await db.select().from(linkRuns).where(eq(linkRuns.fieldId, fieldId));
    expect(run.registrationId).toBe(reg.id);
    expect(run.settings.registrationModel).toBe('similarity');
    expect(run.settings.positivityMeasure).toBe('joint_amplitude');
    // without control samples in its study role, the sample's calls are made on camera noise, and the run says so in words
    const rule = (run.settings.thresholdRule as Record<string, string>).CD9;
    expect(['camera_noise', 'control']).toContain(rule);
    expect(String((run.settings.ruleSentence as Record<string, string>).CD9)).toMatch(/noise/);
    const affine = fitAffine(pairs.map((p) => p.afm), pairs.map((p) => p.fl)).flFromAfm;
    const rows = await db.select().from(vesicles).where(eq(vesicles.linkRunId, run.id));
    expect(rows.length).toBeGreaterThan(10);
    let maxFromAffine = 0;
    for (const r of rows) {
      const want = applyAffine(reg.flFromAfm, { x: r.xAfmPx, y: r.yAfmPx });
      // stored as 4-byte reals: ~1e-5 px at these magnitudes
      expect(Math.abs(r.xFlPx! - want.x)).toBeLessThan(1e-3);
      expect(Math.abs(r.yFlPx! - want.y)).toBeLessThan(1e-3);
      const other = applyAffine(affine, { x: r.xAfmPx, y: r.yAfmPx });
      maxFromAffine = Math.max(maxFromAffine, Math.hypot(other.x - want.x, other.y - want.y));
    }
    // the check tells the two transforms apart: an affine refit would have moved some vesicle by > 0.2 px
    expect(maxFromAffine).toBeGreaterThan(0.2);
  });

  it('approval: two reviewers at once, exactly one succeeds; the other gets 409', async () => {
    const f = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field;
    const [a, b] = await Promise.all([
      analyst.json(`/api/fields/${fieldId}/review`, 'POST', { decision: 'approved', comment: 'clean field', expectedVersion: f.version }),
      admin.json(`/api/fields/${fieldId}/review`, 'POST', { decision: 'approved', comment: '', expectedVersion: f.version }),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 409]);
    const after = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field;
    expect(after.status).toBe('approved');
    const sendBackNoComment = await analyst.json(`/api/fields/${fieldId}/review`, 'POST', { decision: 'sent_back', expectedVersion: after.version });
    expect(sendBackNoComment.status).toBe(400);
  });
});
