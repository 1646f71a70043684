/**
 * The admin's audit page against the running app and its real PostgreSQL: entries the app writes (a sign-in,
 * a release) are listed, the action filter offers exactly the actions the writers use, and paging reaches
 * entries older than the newest page.
 */
import { describe, expect, afterAll } from 'vitest';
import { randomUUID } from 'node:crypto';
import type { Db } from '../../src/lib/db/client';
import type { AppClient } from '../support/client';
import { DEMO } from '../support/demo';
import { test, it } from '../support/fixtures';
import { AUDIT_ACTIONS } from '../../src/lib/audit';
import { summariseLinkRun } from '../../src/lib/db/queries/linkRunSummaries';

let db: Db;
let admin: AppClient;
const run = randomUUID().slice(0, 8);

async function q<T = Record<string, unknown>>(text: string, params: unknown[] = []): Promise<T[]> {
  return (await db.$client.query(text, params)).rows as T[];
}

/** The page's table rows as [entry number, action, person] and its links, parsed from the HTML. */
async function auditPage(params: Record<string, string>) {
  const res = await admin.fetch(`/admin/audit?${new URLSearchParams(params)}`);
  expect(res.status).toBe(200);
  const html = await res.text();
  const body = html.slice(html.indexOf('data-testid="audit-table"'));
  const rows = [...body.matchAll(/<tr data-entry="(\d+)"><td>\d+<\/td><td>[^<]*<\/td><td>([^<]*)<\/td><td>([^<]*)<\/td>/g)].map((m) => ({ id: Number(m[1]), action: m[2], actor: m[3] }));
  const select = html.slice(html.indexOf('<select'), html.indexOf('</select>'));
  const options = [...select.matchAll(/<option value="([^"]*)"/g)].map((m) => m[1]).filter((v) => v !== '');
  const older = html.match(/<a [^>]*href="\?([^"]*)"[^>]*rel="next"|<a [^>]*rel="next"[^>]*href="\?([^"]*)"/);
  return { html, rows, options, olderQuery: older ? (older[1] ?? older[2]).replace(/&(amp|#38);/g, '&') : null };
}

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  db = fileDb;
  admin = await signedIn('admin');
});
afterAll(async () => {
  await q(`delete from audit_log where actor_email like $1`, [`pager-${run}-%`]);
});

describe('admin audit page', () => {
  it('lists a sign-in and a release the app wrote', async ({ signedIn }) => {
    await signedIn('analyst', { fresh: true });
    const signIns = await auditPage({ action: 'sign_in.succeeded', actor: DEMO.analyst });
    expect(signIns.rows.length).toBeGreaterThan(0);
    expect(signIns.rows[0]).toMatchObject({ action: 'sign_in.succeeded', actor: DEMO.analyst });
    const [newest] = await q<{ id: string }>(`select id from audit_log where action = 'sign_in.succeeded' and actor_email = $1 order by id desc limit 1`, [DEMO.analyst]);
    expect(signIns.rows[0].id).toBe(Number(newest.id));

    // a sample of the demo study with one approved, linked field, released through the API
    const [{ id: studyId }] = await q<{ id: string }>(`select s.study_id as id from samples s where s.code = 'HCP-001'`);
    const [{ id: sampleId }] = await q<{ id: string }>(`insert into samples (study_id, code) values ($1, $2) returning id`, [studyId, `AUDIT-${run}`]);
    const [{ id: fieldId }] = await q<{ id: string }>(`insert into fields (sample_id, name, status, afm_pixel_nm) values ($1, 'F1', 'approved', 3.9) returning id`, [sampleId]);
    await q(`insert into registrations (field_id, version, model, pairs, fl_from_afm, fre_nm) values ($1, 1, 'affine', '[]', '[1,0,0,0,1,0]', 20)`, [fieldId]);
    const [{ id: linkRunId }] = await q<{ id: string }>(`insert into link_runs (field_id, settings, summary) values ($1, '{}', '{}') returning id`, [fieldId]);
    await q(
      `insert into vesicles (link_run_id, field_id, sample_id, index, x_afm_px, y_afm_px, height_nm, mean_height_nm, area_nm2, diameter_nm, volume_nm3, circularity, marker_bits, markers)
       values ($1, $2, $3, 0, 10, 10, 12, 6, 5000, 80, 60000, 0.9, 1, '[{"intensity":1,"snr":1,"amplitude":1,"spotDistancePx":null}]')`,
      [linkRunId, fieldId, sampleId],
    );
    await summariseLinkRun(db, linkRunId);
    const analyst = await signedIn('analyst');
    const rel = await analyst.fetch(`/api/samples/${sampleId}/release`, { method: 'POST' });
    expect(rel.status, await rel.clone().text()).toBe(201);
    const released = await auditPage({ action: 'sample.released' });
    const [entry] = await q<{ id: string }>(`select id from audit_log where action = 'sample.released' and target_id = $1`, [sampleId]);
    expect(released.rows.find((r) => r.id === Number(entry.id))).toMatchObject({ action: 'sample.released', actor: DEMO.analyst });
    expect(released.rows.every((r) => r.action === 'sample.released')).toBe(true);
  });

  it('offers exactly the actions the writers use, and every action in the log is one of them', async () => {
    const page = await auditPage({});
    expect(page.options).toEqual([...AUDIT_ACTIONS]);
    expect(page.options).toContain('panel.changed');
    expect(page.options).toContain('user.password_reset_requested');
    expect(page.options).not.toContain('field.upload_failed');
    // the suite has signed in, uploaded, registered, reviewed and released by now: nothing outside the list
    const written = (await q<{ action: string }>(`select distinct action from audit_log`)).map((r) => r.action);
    expect(written.length).toBeGreaterThan(1);
    for (const a of written) expect(AUDIT_ACTIONS as readonly string[]).toContain(a);
    // an action the log never records is refused with a message, not silently matched to nothing
    const odd = await auditPage({ action: 'field.upload_failed' });
    expect(odd.html).toContain('is not an action the log records');
  });

  it('pages back past the newest 500 entries', async () => {
    // 503 entries by one invented person, numbered in the order written
    const actor = (i: number) => `pager-${run}-${i}@demo.heightlight.test`;
    await q(
      `insert into audit_log (action, actor_email, details) select 'sign_in.failed', 'pager-${run}-' || g || '@demo.heightlight.test', '{}' from generate_series(0, 502) g order by g`,
    );
    const first = await auditPage({ actor: `pager-${run}-` });
    expect(first.rows).toHaveLength(500);
    expect(first.rows[0].actor).toBe(actor(502));
    expect(first.rows[499].actor).toBe(actor(3));
    expect(first.olderQuery).not.toBeNull();
    const olderParams = Object.fromEntries(new URLSearchParams(first.olderQuery!));
    expect(olderParams.actor).toBe(`pager-${run}-`);
    const second = await auditPage(olderParams);
    expect(second.rows.map((r) => r.actor)).toEqual([actor(2), actor(1), actor(0)]);
    expect(second.olderQuery).toBeNull();
    expect(second.html).toContain('Newest entries');
  });
});
