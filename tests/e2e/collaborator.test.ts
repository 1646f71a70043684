/**
 * The demo collaborator opens the group comparison and downloads CSVs in Chromium. The demo seed has
 * samples but no vesicles, so approved fields, link runs, generated vesicles and a release are
 * written to the database first (idempotent: skipped when the demo samples are already released).
 */
import { describe, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import type { Db } from '../../src/lib/db/client';
import { summariseLinkRun } from '../../src/lib/db/queries/linkRunSummaries';
import { islandsReady, signInAs, screenshot } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { test, it } from '../support/fixtures';

let db: Db;
let studyId: string;
const positives: Record<string, number> = {};

async function q<T = Record<string, unknown>>(text: string, params: unknown[] = []): Promise<T[]> {
  return (await db.$client.query(text, params)).rows as T[];
}

/** One approved field per demo sample with n generated vesicles (INSERT … SELECT generate_series), then release v1. */
async function releaseDemoSample(sampleId: string, n: number, cd9Every: number) {
  if ((await q(`select 1 from releases where sample_id = $1`, [sampleId])).length) return;
  const [f] = await q<{ id: string }>(`insert into fields (sample_id, name, status, afm_pixel_nm) values ($1, 'E2E field', 'approved', 3.9) returning id`, [sampleId]);
  const [lr] = await q<{ id: string }>(`insert into link_runs (field_id, settings, summary) values ($1, '{}', '{}') returning id`, [f.id]);
  await q(
    `insert into vesicles (link_run_id, field_id, sample_id, index, x_afm_px, y_afm_px, height_nm, mean_height_nm, area_nm2, diameter_nm, volume_nm3, circularity, marker_bits, markers)
     select $1, $2, $3, i, 1, 1, 5 + (i * 13) % 30, 4, 1000, 40 + (i * 37) % 160, 10000, 0.9,
            (case when i % $5 = 0 then 1 else 0 end) | (case when i % 2 = 0 then 2 else 0 end),
            '[{"intensity":1,"snr":1,"amplitude":1,"spotDistancePx":null},{"intensity":1,"snr":1,"amplitude":1,"spotDistancePx":null},{"intensity":1,"snr":1,"amplitude":1,"spotDistancePx":null}]'
       from generate_series(1, $4::int) i`,
    [lr.id, f.id, sampleId, n, cd9Every],
  );
  await summariseLinkRun(db, lr.id);
  await q(`insert into releases (sample_id, version, link_run_ids) values ($1, 1, $2::jsonb)`, [sampleId, JSON.stringify([lr.id])]);
}

test.beforeAll(async ({ db: fileDb }) => {
  db = fileDb;
  [{ id: studyId }] = await q<{ id: string }>(`select id from studies where name like 'Harbour Clinic plasma EV pilot%'`);
  const samples = await q<{ id: string; code: string }>(`select id, code from samples where study_id = $1 and code in ('HCP-001', 'HCP-002', 'HCP-003', 'HCP-004')`, [studyId]);
  for (const [i, s] of samples.entries()) {
    await releaseDemoSample(s.id, 400 + 50 * i, s.code < 'HCP-003' ? 2 : 5);
    const [row] = await q<{ k: number }>(
      `select count(*) filter (where v.marker_bits & 1 <> 0)::int as k from vesicles v
         where v.link_run_id in (select jsonb_array_elements_text(link_run_ids)::uuid from releases where sample_id = $1 and version = (select max(version) from releases where sample_id = $1))`,
      [s.id],
    );
    positives[s.code] = row.k;
  }
});

describe('collaborator results in Chromium', () => {
  it('opens the comparison, sees the caution and downloads the comparison and summary CSVs', async ({ newPage }) => {
    const page = await newPage({ acceptDownloads: true });
    const errors: string[] = [];
    page.on('console', (m) => { if (m.type() === 'error') errors.push(m.text()); });
    await signInAs(page, DEMO.collaborator, DEMO_PASSWORD);

    await page.getByRole('link', { name: 'Released results' }).click();
    await expect(page.getByTestId('released-samples').first().textContent()).resolves.toContain('HCP-001');
    await page.getByRole('link', { name: 'Compare groups' }).first().click();
    await page.waitForURL((u) => u.pathname === `/studies/${studyId}/compare`);
    await islandsReady(page); // a group chosen before the dashboard hydrates is reset
    expect(await page.getByTestId('research-caution').isVisible()).toBe(true);
    await page.getByLabel('Group A').selectOption('patient');
    await page.getByLabel('Group B').selectOption('healthy control');
    await page.getByTestId('comparison-table').getByText('CD9', { exact: true }).waitFor();
    // the samples (donors) per group stand above the table; the method is stated; nothing tests vesicles
    const perGroup = await page.getByTestId('samples-per-group').textContent();
    expect(perGroup).toMatch(/patient: \d+ samples?/);
    expect(perGroup).toMatch(/healthy control: \d+ samples?/);
    expect(await page.getByTestId('method').textContent()).toContain('empirical logits');
    expect(await page.getByTestId('pooled-table').textContent()).not.toMatch(/p\b|Fisher|chi-square/);
    // the dot-and-interval plot is an SVG drawn in the browser
    await page.getByRole('img', { name: /Marker-positive fraction per sample/ }).locator('svg').first().waitFor();
    expect(await page.getByTestId('checklist').textContent()).toContain('Separation (isolation) method');
    await screenshot(page, 'collaborator-compare');

    const [cmp] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download comparison CSV' }).click()]);
    const cmpText = readFileSync((await cmp.path())!, 'utf8');
    expect(cmpText.split('\r\n')[0]).toBe('# Research use only. Not for diagnosis or treatment decisions.');
    expect(cmpText).toMatch(/^comparison_marker,patient - healthy control,,CD9,\d+,\d+,/m);
    expect(cmpText).toContain('# The sample (donor) is the unit');

    await page.goto(`${APP_URL}/results`);
    await page.getByRole('link', { name: 'HCP-001' }).click();
    expect(await page.getByTestId('research-caution').isVisible()).toBe(true);
    await page.getByTestId('marker-table').waitFor();
    await page.getByRole('img', { name: /Histogram of equivalent diameter/ }).locator('svg').first().waitFor();
    const [dl] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download summary CSV' }).click()]);
    expect(dl.suggestedFilename()).toMatch(/^HCP-001_release-v\d+_summary\.csv$/);
    const lines = readFileSync((await dl.path())!, 'utf8').trim().split('\r\n');
    expect(lines[0]).toBe('# Research use only. Not for diagnosis or treatment decisions.');
    const cd9 = lines.find((l) => l.includes(',marker_positive,CD9,'))!.split(',');
    expect(Number(cd9[6])).toBe(positives['HCP-001']);
    await screenshot(page, 'collaborator-sample');
    expect(errors).toEqual([]);
  });
});
