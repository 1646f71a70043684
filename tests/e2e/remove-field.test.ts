/**
 * A biologist removes a failed field from its field page in Chromium: the confirmation names the field,
 * dismissing it keeps the field, accepting it removes the field and returns to the study.
 */
import { describe, expect, afterAll } from 'vitest';
import type { Db } from '../../src/lib/db/client';
import { islandsReady, signInAs } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { test, it } from '../support/fixtures';

let db: Db;
let studyId: string;
let sampleId: string;
let fieldId: string;
const code = `RF-${Date.now().toString(36)}`;

test.beforeAll(async ({ db: fileDb }) => {
  db = fileDb;
  const q = async (text: string, params: unknown[]) => (await db.$client.query(text, params)).rows;
  [{ id: studyId }] = await q(`select id from studies where name like 'Harbour Clinic plasma EV pilot%'`, []);
  [{ id: sampleId }] = await q(`insert into samples (study_id, code) values ($1, $2) returning id`, [studyId, code]);
  [{ id: fieldId }] = await q(
    `insert into fields (sample_id, name, status, failure_reason) values ($1, 'grid Z9', 'failed', 'The height map could not be read.') returning id`,
    [sampleId],
  );
});

afterAll(async () => {
  await db?.$client.query(`delete from samples where id = $1`, [sampleId]);
});

describe('removing a field in Chromium', () => {
  it('asks by name, keeps the field when dismissed, removes it when confirmed', async ({ page }) => {
    await signInAs(page, DEMO.biologist, DEMO_PASSWORD);
    await page.goto(`${APP_URL}/fields/${fieldId}`);
    await islandsReady(page);
    const questions: string[] = [];
    let accept = false;
    page.on('dialog', (d) => {
      questions.push(d.message());
      void (accept ? d.accept() : d.dismiss());
    });
    const button = page.getByRole('button', { name: 'Remove field grid Z9' });
    await button.click();
    await expect.poll(() => questions.length).toBe(1);
    expect(questions[0]).toContain(`Remove field "grid Z9" of sample ${code}?`);
    expect((await db.$client.query(`select 1 from fields where id = $1`, [fieldId])).rowCount).toBe(1);

    accept = true;
    await button.click();
    await page.getByRole('status').filter({ hasText: 'Field grid Z9 was removed.' }).waitFor();
    await page.waitForURL((u) => u.pathname === `/studies/${studyId}`, { timeout: 10_000 });
    expect(questions).toHaveLength(2);
    expect((await db.$client.query(`select 1 from fields where id = $1`, [fieldId])).rowCount).toBe(0);
  });
});
