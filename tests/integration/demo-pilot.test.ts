/**
 * The demo pilot that `npm start` and `npm test` run (scripts/seedPilot.ts, scripts/lib/runPilot.ts): it went
 * through the job worker (ingestion and linking jobs completed in the queue, link runs and vesicle rows made
 * by them, releases holding those runs), its registrations are the demo analyst's and map like the generator's
 * true transform, fields wait at every analyst step, and the collaborator sees released results, a group
 * comparison and the research-use caution on every result reply.
 */
import { describe, expect } from 'vitest';
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { AppClient } from '../support/client';
import { DEMO } from '../support/demo';
import type { Db } from '../../src/lib/db/client';
import { auditLog, fields, linkRuns, registrations, releases, samples, studies, users, vesicles } from '../../src/lib/db/schema';
import { PILOT_FIELD_NAMES, PILOT_SAMPLES, PILOT_SCENE, PILOT_STUDY_NAME, pilotSeed } from '../../scripts/seedPilot';
import { makeCorrelativePair } from '../../fixtures/demoScene';
import { DEMO_PANEL } from '../../scripts/seed';
import { applyAffine } from '../../src/lib/analysis/geometry';
import type { Affine } from '../../src/lib/analysis/types';
import { RESEARCH_USE_NOTICE } from '../../src/lib/reporting/researchUse';
import { test, it } from '../support/fixtures';

let db: Db;
let collaborator: AppClient;
let studyId: string;
let sampleRows: (typeof samples.$inferSelect)[];
let fieldRows: (typeof fields.$inferSelect)[];

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  db = fileDb;
  collaborator = await signedIn('collaborator');
  const [study] = await db.select().from(studies).where(eq(studies.name, PILOT_STUDY_NAME));
  studyId = study.id;
  sampleRows = await db.select().from(samples).where(eq(samples.studyId, studyId));
  fieldRows = await db.select().from(fields).where(inArray(fields.sampleId, sampleRows.map((s) => s.id)));
});

const fieldOf = (code: string, name: string) => {
  const sample = sampleRows.find((s) => s.code === code)!;
  return fieldRows.find((f) => f.sampleId === sample.id && f.name === name)!;
};

describe('the seeded demo pilot', () => {
  it('has two groups of at least 4 donors, an isotype and a buffer-only control, and 2 fields per sample', () => {
    const donors = (g: string) => sampleRows.filter((s) => s.groupLabel === g && s.controlKind === 'none').length;
    expect(donors('pancreatic cancer')).toBeGreaterThanOrEqual(4);
    expect(donors('healthy control')).toBeGreaterThanOrEqual(4);
    expect(sampleRows.map((s) => s.controlKind)).toEqual(expect.arrayContaining(['isotype', 'buffer_only']));
    expect(fieldRows).toHaveLength(PILOT_SAMPLES.length * PILOT_FIELD_NAMES.length);
    // de-identified codes only (common practice), and collection dates kept to the month
    for (const s of sampleRows) {
      expect(s.code).toMatch(/^(PDAC|HC|ISO|BUF)-\d+$/);
      expect(s.collectionDate).toMatch(/^\d{4}-\d{2}-01$/);
    }
  });

  it('released at least 8 samples in 2 groups, each release holding the current link runs of approved fields', async () => {
    const rel = await db.select().from(releases).where(inArray(releases.sampleId, sampleRows.map((s) => s.id)));
    const releasedSamples = sampleRows.filter((s) => rel.some((r) => r.sampleId === s.id));
    expect(releasedSamples.filter((s) => s.controlKind === 'none').length).toBeGreaterThanOrEqual(8);
    expect(new Set(releasedSamples.filter((s) => s.controlKind === 'none').map((s) => s.groupLabel)).size).toBeGreaterThanOrEqual(2);
    for (const r of rel) {
      const runs = await db.select().from(linkRuns).where(inArray(linkRuns.id, r.linkRunIds));
      const sampleFields = fieldRows.filter((f) => f.sampleId === r.sampleId);
      expect(runs).toHaveLength(sampleFields.length);
      expect(new Set(runs.map((x) => x.fieldId))).toEqual(new Set(sampleFields.map((f) => f.id)));
      for (const f of sampleFields) expect(f.status).toBe('approved');
    }
  });

  it('made its link runs and vesicle rows through the worker: completed jobs in the queue, rows matching each run summary', async () => {
    const released = fieldRows.filter((f) => f.status === 'approved');
    expect(released.length).toBeGreaterThanOrEqual(16);
    const ids = released.map((f) => f.id);
    // pg-boss keeps finished jobs in its job table (or its archive, once archived)
    const jobs = await db.execute<{ name: string; field_id: string }>(sql`
      select name, data->>'fieldId' as field_id from pgboss.job where state = 'completed' and name in ('ingest-field', 'link-field')
      union all
      select name, data->>'fieldId' as field_id from pgboss.archive where state = 'completed' and name in ('ingest-field', 'link-field')`);
    for (const id of ids) {
      expect(jobs.rows.filter((j) => j.field_id === id).map((j) => j.name)).toEqual(expect.arrayContaining(['ingest-field', 'link-field']));
    }
    const runs = await db.select().from(linkRuns).where(and(inArray(linkRuns.fieldId, ids), eq(linkRuns.current, true)));
    expect(runs).toHaveLength(ids.length);
    // the height maps reach past the fluorescence frames: some vesicles were found outside them
    const [outside] = await db.select({ n: sql<number>`count(*)::int` }).from(vesicles)
      .where(and(inArray(vesicles.linkRunId, runs.map((r) => r.id)), eq(vesicles.outOfFrame, true)));
    expect(outside.n).toBeGreaterThan(0);
    for (const run of runs) {
      const rows = await db.select({ markerBits: vesicles.markerBits, outOfFrame: vesicles.outOfFrame }).from(vesicles).where(eq(vesicles.linkRunId, run.id));
      const summary = run.summary as { nbVesicles: number; markers: string[]; positiveByMarker: Record<string, number> };
      expect(rows.length).toBe(summary.nbVesicles);
      summary.markers.forEach((m, i) => {
        expect(rows.filter((v) => ((v.markerBits >> i) & 1) === 1).length).toBe(summary.positiveByMarker[m]);
      });
    }
  });

  it('registered each field from its beads as the demo analyst, close to the generator\'s true transform', async () => {
    const [analyst] = await db.select().from(users).where(eq(users.email, DEMO.analyst));
    const regs = await db.select().from(registrations).where(inArray(registrations.fieldId, fieldRows.map((f) => f.id)));
    const registered = fieldRows.filter((f) => ['registered', 'linked', 'approved'].includes(f.status));
    expect(regs.filter((r) => registered.some((f) => f.id === r.fieldId))).toHaveLength(registered.length);
    for (const r of regs) expect(r.createdBy).toBe(analyst.id);
    const saved = await db.select().from(auditLog).where(and(eq(auditLog.action, 'registration.saved'), inArray(auditLog.targetId, registered.map((f) => f.id))));
    expect(saved.map((a) => a.actorEmail)).toEqual(registered.map(() => DEMO.analyst));
    // one field against the generator's truth (the transform it drew the frames with): corners of the AFM image
    // map within 1 fluorescence pixel (65 nm) of where the truth puts them
    const i = PILOT_SAMPLES.findIndex((s) => s.code === 'PDAC-01');
    const f = fieldOf('PDAC-01', PILOT_FIELD_NAMES[0]);
    const truth = makeCorrelativePair({
      ...PILOT_SCENE, seed: pilotSeed(i, 0),
      markers: DEMO_PANEL.map((p, c) => ({ marker: p.marker, emissionNm: p.emissionNm, positiveFraction: PILOT_SAMPLES[i].positiveFractions[c] })),
    });
    const last = PILOT_SCENE.afmSizePx - 1;
    const reg = regs.find((r) => r.fieldId === f.id)!;
    for (const p of [{ x: 0, y: 0 }, { x: last, y: 0 }, { x: 0, y: last }, { x: last, y: last }, { x: last / 2, y: last / 2 }]) {
      const a = applyAffine(reg.flFromAfm as unknown as Affine, p);
      const b = applyAffine(truth.flFromAfm, p);
      expect(Math.hypot(a.x - b.x, a.y - b.y)).toBeLessThan(1);
    }
  });

  it('leaves fields at every analyst step: ready to register, registered, and linked waiting for review', () => {
    expect(fieldOf('HC-05', PILOT_FIELD_NAMES[0]).status).toBe('ready');
    expect(fieldOf('PDAC-05', PILOT_FIELD_NAMES[1]).status).toBe('registered');
    expect(fieldOf('PDAC-05', PILOT_FIELD_NAMES[0]).status).toBe('linked');
    expect(fieldOf('HC-05', PILOT_FIELD_NAMES[1]).status).toBe('linked');
  });

  it('shows the collaborator the released samples and a comparison per marker, CD63 higher in the patient group, with the caution', async () => {
    const q = new URLSearchParams({ groupA: 'pancreatic cancer', groupB: 'healthy control' });
    const res = await collaborator.fetch(`/api/studies/${studyId}/comparison?${q}`);
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body.caution).toBe(RESEARCH_USE_NOTICE);
    expect(body.samplesPerGroup['pancreatic cancer']).toBe(4);
    expect(body.samplesPerGroup['healthy control']).toBe(4);
    const markers = body.comparisons.filter((c: { kind: string }) => c.kind === 'marker');
    expect(markers.map((c: { label: string }) => c.label).sort()).toEqual(['CD63', 'CD81', 'CD9']);
    const cd63 = markers.find((c: { label: string }) => c.label === 'CD63');
    expect(cd63.difference).toBeGreaterThan(0.1);
    expect(cd63.pValue).toBeLessThan(0.05);
  });

  it('carries the research-use caution on every result reply, export and page a collaborator or analyst opens', async ({ signedIn }) => {
    const analyst = await signedIn('analyst');
    const sample = sampleRows.find((s) => s.code === 'PDAC-01')!;
    const field = fieldOf('PDAC-01', PILOT_FIELD_NAMES[0]);
    const q = new URLSearchParams({ groupA: 'pancreatic cancer', groupB: 'healthy control' });
    const json = [
      [collaborator, `/api/samples/${sample.id}/results`], [collaborator, `/api/studies/${studyId}/comparison?${q}`],
      [analyst, `/api/vesicles?sampleId=${sample.id}`], [analyst, `/api/vesicles?fieldId=${field.id}`],
    ] as const;
    for (const [who, path] of json) {
      const r = await who.fetch(path);
      expect(r.status, path).toBe(200);
      expect((await r.json()).caution, path).toBe(RESEARCH_USE_NOTICE);
    }
    const csv = [
      [collaborator, `/api/samples/${sample.id}/results.csv`], [collaborator, `/api/studies/${studyId}/comparison.csv?${q}`],
      [analyst, `/api/samples/${sample.id}/vesicles.csv`], [analyst, `/api/vesicles/export.csv?sampleId=${sample.id}`],
    ] as const;
    for (const [who, path] of csv) {
      const r = await who.fetch(path);
      expect(r.status, path).toBe(200);
      expect((await r.text()).split(/\r?\n/)[0], path).toMatch(/^#? ?Research use only\. Not for diagnosis or treatment decisions\./);
    }
    const pages = [
      [collaborator, `/results/${sample.id}`], [collaborator, `/studies/${studyId}/compare`], [collaborator, '/results'],
      [analyst, `/fields/${field.id}`], [analyst, `/studies/${studyId}`],
    ] as const;
    for (const [who, path] of pages) {
      const r = await who.fetch(path);
      expect(r.status, path).toBe(200);
      const html = await r.text();
      expect(html, path).toContain('data-testid="research-caution"');
      expect(html, path).toContain('Not for diagnosis or treatment decisions.');
    }
  });
});
