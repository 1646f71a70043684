/**
 * In Chromium: an analyst sets k and a hand-set threshold on the study page (a bad k gets the server's message), sees
 * a field linked with other settings listed, and its review panel shows each marker's threshold, rule and k.
 */
import { describe, expect, afterAll } from 'vitest';
import type { Db } from '../../src/lib/db/client';
import { islandReady, islandsReady, signInAs } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { ownStudy } from '../support/demoField';
import { test, it } from '../support/fixtures';

let db: Db;
let studyId: string;
let sampleId: string;
let fieldId: string;
const code = `PS-${Date.now().toString(36)}`;
const q = async <T = Record<string, unknown>>(text: string, params: unknown[] = []) => (await db.$client.query(text, params)).rows as T[];

test.beforeAll(async ({ db: fileDb }) => {
  db = fileDb;
  // a study of its own (the demo panel and members): its thresholds change here while other files link the demo study
  studyId = await ownStudy(db, 'Positivity settings e2e');
  [{ id: sampleId }] = await q<{ id: string }>(`insert into samples (study_id, code) values ($1, $2) returning id`, [studyId, code]);
  [{ id: fieldId }] = await q<{ id: string }>(`insert into fields (sample_id, name, status) values ($1, 'grid P1', 'linked') returning id`, [sampleId]);
  // a run as the linking job saves it: CD9 set by hand, CD63 from empty places, CD81 from controls
  const settings = {
    markers: ['CD9', 'CD63', 'CD81'], thresholdRule: { CD9: 'manual', CD63: 'background_mean_k_sd', CD81: 'control_mean_k_sd' },
    k: { CD9: null, CD63: 3, CD81: 3 }, thresholds: { CD9: 180, CD63: 95.5, CD81: 120.25 }, thresholdMethod: 'test run',
  };
  const summary = { nbVesicles: 0, positiveByMarker: { CD9: 0, CD63: 0, CD81: 0 }, nbOutOfFrame: 0, nbVesiclesWithoutMarker: 0 };
  await q(`insert into link_runs (field_id, settings, summary) values ($1, $2, $3)`, [fieldId, JSON.stringify(settings), JSON.stringify(summary)]);
});

afterAll(async () => {
  await db?.$client.query(`update marker_channels set positivity_k = 2.58, manual_threshold_counts = null where study_id = $1`, [studyId]);
  await db?.$client.query(`delete from samples where id = $1`, [sampleId]);
});

describe('positivity settings in Chromium', () => {
  it('saves k and a hand-set threshold, lists the field linked with other settings, and the review panel shows what a run used', async ({ page }) => {
    await signInAs(page, DEMO.analyst, DEMO_PASSWORD);
    await page.goto(`${APP_URL}/studies/${studyId}`);
    // the study page is long (other tests add samples): its client:visible islands hydrate when scrolled to
    await islandReady(page, 'positivity-settings');
    const card = page.getByTestId('positivity-settings');

    await card.getByLabel('k for CD63').fill('0');
    await card.getByRole('button', { name: 'Save thresholds' }).click();
    await expect.poll(async () => card.getByRole('status').textContent()).toMatch(/k must be at least 0\.5/);
    expect(await q(`select marker from marker_channels where study_id = $1 and positivity_k <> 2.58::real`, [studyId])).toEqual([]);

    await card.getByLabel('k for CD63').fill('4');
    await card.getByLabel('threshold set by hand for CD9 (counts)').fill('250');
    await card.getByRole('button', { name: 'Save thresholds' }).click();
    await expect.poll(async () => card.getByRole('status').textContent()).toMatch(/Thresholds saved/);
    const rows = await q<{ marker: string; k: number; manual: number | null }>(
      `select marker, positivity_k as k, manual_threshold_counts as manual from marker_channels where study_id = $1 order by channel_index`, [studyId]);
    expect(rows).toEqual([{ marker: 'CD9', k: 2.58, manual: 250 }, { marker: 'CD63', k: 4, manual: null }, { marker: 'CD81', k: 2.58, manual: null }]);

    // the run above used 180 counts for CD9 and k = 3 for CD63: listed with both markers, and a button to link it again
    const listed = card.getByTestId('linked-with-other-settings');
    await expect.poll(async () => listed.textContent()).toContain(`${code} · grid P1`);
    expect(await listed.textContent()).toContain('CD9: set by hand, 180 counts; CD63: mean + 3 SD of empty places of the frame, 95.5 counts');
    expect(await listed.getByRole('button', { name: /Link \d+ field\(s\) again/ }).count()).toBe(1);

    await page.goto(`${APP_URL}/fields/${fieldId}`);
    await islandsReady(page);
    const shown = (await page.getByTestId('positivity-thresholds').textContent())!;
    expect(shown).toContain('CD9180 countsset by hand');
    expect(shown).toContain('CD6395.5 countsmean + 3 SD of empty places of the frame');
    expect(shown).toContain('CD81120.25 countsmean + 3 SD of control-sample vesicles');
  });
});
