/**
 * Takes the demo pilot's fields (scripts/seedPilot.ts) through the analyst's steps with the app's own
 * services and the real job queue: waits for the worker's ingestion, saves a registration from the
 * automatic pairing of beads and spots (as the demo analyst, like the registration route), queues linking
 * (controls first: the groups' thresholds come from them) and waits for the worker, approves (as the demo
 * analyst, like the review route) and releases (as the demo biologist, like the release route). No result
 * row is written here. Each step only runs for fields not past it yet, so a second start does nothing.
 * Needs a running worker on the same database and bucket.
 */
import { and, eq, inArray } from 'drizzle-orm';
import { createDb, type Db } from '../../src/lib/db/client';
import { createStorage, type Storage } from '../../src/lib/storage/client';
import { fields, releases, samples, studies, users } from '../../src/lib/db/schema';
import { getBytes } from '../../src/lib/storage/objects';
import { detectionKey } from '../../src/lib/storage/keys';
import type { FieldDetection } from '../../src/lib/jobs/detectionTypes';
import { proposePairs } from '../../src/lib/registration/proposePairs';
import { saveRegistration } from '../../src/lib/registration/saveRegistration';
import { queueLinking } from '../../src/lib/jobs/enqueue';
import { reviewField } from '../../src/lib/review/reviewField';
import { createRelease } from '../../src/lib/db/queries/releases';
import { audit } from '../../src/lib/audit';
import { DEMO_USERS } from '../seed';
import { PILOT_FIELD_NAMES, PILOT_SAMPLES, PILOT_STUDY_NAME, type PilotTarget } from '../seedPilot';

const STEPS: PilotTarget[] = ['ready', 'registered', 'linked', 'released'];
const reaches = (target: PilotTarget, step: PilotTarget) => STEPS.indexOf(target) >= STEPS.indexOf(step);
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

interface PilotField { id: string; code: string; control: boolean; target: PilotTarget }

type FieldRow = typeof fields.$inferSelect;

async function fieldRows(db: Db, ids: string[]): Promise<FieldRow[]> {
  return ids.length ? db.select().from(fields).where(inArray(fields.id, ids)) : [];
}

/**
 * Waits until every field has left the given statuses (or failed), logging progress at most every 10 s.
 * @returns the rows at the end
 */
async function waitWhile(db: Db, ids: string[], busy: (f: FieldRow) => boolean, what: string, log: (m: string) => void, timeoutMs: number) {
  const until = Date.now() + timeoutMs;
  let said = 0;
  for (;;) {
    const rows = await fieldRows(db, ids);
    const left = rows.filter(busy);
    if (!left.length) return rows;
    if (Date.now() > until) throw new Error(`demo pilot: ${left.length} field(s) still ${what} after ${timeoutMs / 1000} s; is the worker running?`);
    if (Date.now() - said > 10_000) {
      log(`demo pilot: ${what} ${rows.length - left.length}/${rows.length} field(s) done`);
      said = Date.now();
    }
    await sleep(500);
  }
}

async function registerFromBeads(db: Db, st: Storage, field: FieldRow, analyst: { id: string; email: string }) {
  const detection = JSON.parse(new TextDecoder().decode(await getBytes(st, detectionKey(field.id)))) as FieldDetection;
  const o = { afmPixelNm: field.afmPixelNm ?? 1, flPixelNm: field.flPixelNm ?? 1 };
  const proposal = proposePairs(detection, { ...o, inlierTolerancePx: 2, model: 'affine' });
  // the beads are the fiducials: keep the pairs whose AFM point is a bead when there are enough of them
  const isBead = (p: { x: number; y: number }) => detection.fiducialCandidates.some((b) => Math.hypot(b.x - p.x, b.y - p.y) < 1);
  const beadPairs = proposal.pairs.filter((p) => isBead(p.afm));
  const pairs = (beadPairs.length >= 4 ? beadPairs : proposal.pairs).map((p) => ({ afm: p.afm, fl: p.fl }));
  const { registration, evaluation } = await saveRegistration(db, field, analyst.id, { basedOnVersion: 0, model: 'affine', pairs });
  await audit(db, {
    action: 'registration.saved', actorId: analyst.id, actorEmail: analyst.email, targetType: 'field', targetId: field.id,
    details: { version: registration.version, pairs: pairs.length, freNm: evaluation.freNm, demoPilot: true },
  });
}

/**
 * Runs the pilot to its targets. Returns once every pilot field is where it should be.
 * @param log - progress lines for the console
 * @param timeoutMs - per waiting step
 */
export async function runPilot(env: Record<string, string>, log: (m: string) => void, timeoutMs = 15 * 60_000) {
  const db = createDb(env.DATABASE_URL, 2);
  const st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY, forcePathStyle: true });
  const started = Date.now();
  try {
    const [study] = await db.select().from(studies).where(eq(studies.name, PILOT_STUDY_NAME));
    if (!study) return;
    const people = await db.select({ id: users.id, email: users.email }).from(users).where(inArray(users.email, DEMO_USERS.map((u) => u.email)));
    const person = (role: string) => people.find((p) => p.email === DEMO_USERS.find((u) => u.role === role)!.email)!;
    const analyst = person('analyst');
    const biologist = person('biologist');
    const sampleRows = await db.select().from(samples).where(eq(samples.studyId, study.id));
    const fieldList = await db.select({ id: fields.id, sampleId: fields.sampleId, name: fields.name }).from(fields)
      .where(inArray(fields.sampleId, sampleRows.map((s) => s.id)));
    const pilot: PilotField[] = [];
    for (const spec of PILOT_SAMPLES) {
      const sample = sampleRows.find((s) => s.code === spec.code);
      if (!sample) continue;
      PILOT_FIELD_NAMES.forEach((name, j) => {
        const f = fieldList.find((x) => x.sampleId === sample.id && x.name === name);
        if (f) pilot.push({ id: f.id, code: spec.code, control: spec.controlKind !== 'none', target: spec.targets[j] });
      });
    }
    const ids = pilot.map((p) => p.id);
    const before = await fieldRows(db, ids);
    const released = await db.select({ sampleId: releases.sampleId }).from(releases).where(inArray(releases.sampleId, sampleRows.map((s) => s.id)));
    const alreadyDone = pilot.every((p) => {
      const row = before.find((r) => r.id === p.id)!;
      return p.target === 'released' ? released.some((r) => r.sampleId === row.sampleId) : row.status === p.target || row.status === 'failed';
    });
    if (alreadyDone) return;
    log(`demo pilot: taking ${pilot.length} field(s) of ${PILOT_SAMPLES.length} samples through ingestion, registration, linking and release (the worker does the analysis)`);

    // 1. ingestion by the worker (queued at seed time)
    let rows = await waitWhile(db, ids, (f) => ['uploading', 'ingesting'].includes(f.status), 'ingested', log, timeoutMs);
    for (const f of rows.filter((r) => r.status === 'failed')) log(`demo pilot: field ${f.name} of ${pilot.find((p) => p.id === f.id)?.code} failed: ${f.failureReason}`);

    // 2. registration from the beads, saved as the demo analyst
    for (const p of pilot.filter((x) => reaches(x.target, 'registered'))) {
      const f = rows.find((r) => r.id === p.id)!;
      if (f.status !== 'ready') continue;
      try {
        await registerFromBeads(db, st, f, analyst);
      } catch (e) {
        log(`demo pilot: could not register ${p.code} ${f.name}: ${(e as Error).message}`);
      }
    }
    log('demo pilot: registrations saved');

    // 3. linking by the worker: controls first, then the donors (their thresholds come from the controls)
    for (const controls of [true, false]) {
      const batch = pilot.filter((p) => p.control === controls && reaches(p.target, 'linked'));
      rows = await fieldRows(db, batch.map((p) => p.id));
      const toLink = rows.filter((r) => r.status === 'registered').map((r) => r.id);
      if (!toLink.length) continue;
      await queueLinking(db, toLink);
      rows = await waitWhile(db, toLink, (f) => f.status === 'registered' && !f.failureReason, controls ? 'linked (controls)' : 'linked (donors)', log, timeoutMs);
      for (const f of rows.filter((r) => r.status !== 'linked')) log(`demo pilot: linking ${f.name} of ${pilot.find((p) => p.id === f.id)?.code} failed: ${f.failureReason}`);
    }

    // 4. approval as the demo analyst
    rows = await fieldRows(db, ids);
    for (const p of pilot.filter((x) => x.target === 'released')) {
      const f = rows.find((r) => r.id === p.id)!;
      if (f.status !== 'linked') continue;
      await reviewField(db, f, analyst.id, { decision: 'approved', comment: '', expectedVersion: f.version });
      await audit(db, { action: 'field.approved', actorId: analyst.id, actorEmail: analyst.email, targetType: 'field', targetId: f.id, details: { comment: '', demoPilot: true } });
    }

    // 5. release as the demo biologist, once per sample
    let nbReleased = 0;
    for (const spec of PILOT_SAMPLES.filter((s) => s.targets.every((t) => t === 'released'))) {
      const sample = sampleRows.find((s) => s.code === spec.code);
      if (!sample) continue;
      const [existing] = await db.select({ id: releases.id }).from(releases).where(and(eq(releases.sampleId, sample.id)));
      if (existing) continue;
      const out = await createRelease(db, sample.id, biologist.id, 0);
      if (!out.ok) {
        log(`demo pilot: sample ${spec.code} not released (${out.reason})`);
        continue;
      }
      nbReleased++;
      await audit(db, {
        action: 'sample.released', actorId: biologist.id, actorEmail: biologist.email, targetType: 'sample', targetId: sample.id,
        details: { version: out.release.version, linkRunIds: out.release.linkRunIds, sampleCode: spec.code, demoPilot: true },
      });
    }
    log(`demo pilot: done in ${Math.round((Date.now() - started) / 1000)} s (${nbReleased} sample(s) released)`);
  } finally {
    await db.$client.end();
  }
}
