import type PgBoss from 'pg-boss';
import { eq, and } from 'drizzle-orm';
import { QUEUES } from './queues';
import { ingestField, PermanentJobError } from './ingestField';
import { linkField } from './linkField';
import { getDb } from '../db/client';
import { getStorage } from '../storage/client';
import { config } from '../config';
import { fields, samples, users, studyMembers } from '../db/schema';
import { send } from '../mail';
import { ImagingError } from '../imaging';
import { jobDecodeLimits } from './decodeStoredFile';
import { sendPasswordResetMail, type ResetMailJob } from '../auth/passwordResetMail';

async function notifyFieldReady(fieldId: string) {
  const db = await getDb();
  const [row] = await db
    .select({ name: fields.name, status: fields.status, reason: fields.failureReason, createdBy: fields.createdBy, studyId: samples.studyId, code: samples.code })
    .from(fields).innerJoin(samples, eq(samples.id, fields.sampleId)).where(eq(fields.id, fieldId));
  if (!row) return;
  const link = new URL(`/fields/${fieldId}`, config().PUBLIC_URL).toString();
  const [uploader] = row.createdBy ? await db.select().from(users).where(eq(users.id, row.createdBy)) : [];
  const ok = row.status === 'ready';
  if (uploader) {
    await send({
      to: uploader.email,
      subject: ok ? `Field ${row.name} (${row.code}) is processed` : `Field ${row.name} (${row.code}) could not be processed`,
      text: ok ? `Your field ${row.name} of sample ${row.code} is processed and ready to register.\n\n${link}` : `Processing of field ${row.name} failed: ${row.reason}\n\n${link}`,
      html: '',
    }).catch((e) => console.error('[jobs] mail failed:', e.message));
  }
  if (ok) {
    const analysts = await db.select({ email: users.email }).from(studyMembers).innerJoin(users, eq(users.id, studyMembers.userId))
      .where(and(eq(studyMembers.studyId, row.studyId), eq(studyMembers.role, 'analyst')));
    for (const a of analysts) {
      await send({ to: a.email, subject: `Field ready to register: ${row.name} (${row.code})`, text: `A new field is ready to register.\n\n${link}`, html: '' })
        .catch((e) => console.error('[jobs] mail failed:', e.message));
    }
  }
}

/** An error that a retry cannot mend: a bad or missing file, or an image the decoder refuses. */
function isPermanent(e: unknown): boolean {
  return e instanceof PermanentJobError || e instanceof ImagingError;
}

/**
 * Whether a failed attempt is the job's last, so the uploader should hear of the failure now: a permanent error
 * ends the job at once; any other error ends it only on the last try pg-boss allows (retryCount counts the
 * retries already started: 0 on the first try, retryLimit on the last).
 *
 * @param error - what the attempt threw
 * @param job - the job's retry count and limit, as pg-boss hands them with `includeMetadata`
 * @returns true when no further attempt will follow
 */
export function isFinalFailure(error: unknown, job: { retryCount: number; retryLimit: number }): boolean {
  return isPermanent(error) || job.retryCount >= job.retryLimit;
}

/** Registers the worker's job handlers. */
export async function registerHandlers(boss: PgBoss) {
  const c = config();
  const decodeLimits = jobDecodeLimits(c);
  await boss.work<ResetMailJob>(QUEUES.passwordResetMail, { batchSize: 1 }, async ([job]) => {
    await sendPasswordResetMail(await getDb(), c.PUBLIC_URL, job.data);
  });
  await boss.work<{ fieldId: string }>(QUEUES.linkField, { batchSize: 1 }, async ([job]) => {
    const started = Date.now();
    try {
      const r = await linkField({ db: await getDb(), st: await getStorage(), decodeLimits }, job.data.fieldId);
      console.log(`[worker] linked field ${job.data.fieldId} in ${Date.now() - started} ms`, r?.vesicles);
    } catch (e) {
      console.error(`[worker] linking ${job.data.fieldId} failed:`, describeError(e));
      if (!isPermanent(e)) throw e;
    }
  });
  await boss.work<{ fieldId: string }>(QUEUES.ingestField, { batchSize: 1, includeMetadata: true }, async ([job]) => {
    const started = Date.now();
    console.log(`[worker] ingesting field ${job.data.fieldId} (job ${job.id}, try ${job.retryCount + 1} of ${job.retryLimit + 1})`);
    try {
      const r = await ingestField({ db: await getDb(), st: await getStorage(), decodeLimits }, job.data.fieldId);
      console.log(`[worker] ingested field ${job.data.fieldId} in ${Date.now() - started} ms`, r);
    } catch (e) {
      console.error(`[worker] field ${job.data.fieldId} failed:`, describeError(e));
      // Mail the uploader once: when this failure is final, not on every try that a retry may still mend.
      if (isFinalFailure(e, job)) await notifyFieldReady(job.data.fieldId).catch((m) => console.error('[jobs] notice failed:', (m as Error).message));
      // A bad file will not get better on a retry: the field is marked failed and the job ends.
      if (!isPermanent(e)) throw e;
      return;
    }
    await notifyFieldReady(job.data.fieldId);
  });
}

/** The message and, for a failed query, the driver's own reason (Drizzle wraps it in `cause`). */
function describeError(e: unknown): string {
  const err = e as Error & { cause?: unknown };
  const cause = err.cause instanceof Error ? ` (${err.cause.message})` : '';
  return `${err.message}${cause}`;
}
