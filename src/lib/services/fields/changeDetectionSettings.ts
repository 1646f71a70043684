import { and, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { fields, linkRuns } from '../../db/schema';
import { conflict, HttpError } from '../../http/errors';
import { enqueueIngest } from '../../jobs/enqueue';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { DetectionSettings } from '../../schemas/detectionSettings';

/** Statuses from which a field may be detected again (not while a job runs, not once approved). */
const REDETECTABLE = ['ready', 'registered', 'linked', 'failed'] as const;

/**
 * Saves a field's vesicle-detection settings (null = automatic defaults) and queues its ingestion again. The job
 * ends "registered" when the field has a registration, else "ready": linking must be re-run, and the field's current
 * link run stops being current at once (its rows stay, and a release keeps its own).
 * @param expectedVersion - the field version the person saw
 * @throws HttpError 404 `not_found`, 409 `conflict` (approved, or a job running) or 409 `stale_version`; nothing changes
 */
export async function changeDetectionSettings(db: Db, by: Actor, fieldId: string, settings: DetectionSettings | null, expectedVersion: number) {
  // one guarded update: the status, version and "no linking job running" checks cannot race the worker
  const [row] = await db.update(fields)
    .set({ detectionSettings: settings, status: 'ingesting', failureReason: null, progress: { stage: 'queued', fraction: 0 }, version: sql`${fields.version} + 1`, updatedAt: sql`now()` })
    .where(and(
      eq(fields.id, fieldId), eq(fields.version, expectedVersion), inArray(fields.status, [...REDETECTABLE]),
      sql`coalesce((${fields.progress}->>'fraction')::float8, 1) >= 1`,
    ))
    .returning({ version: fields.version });
  if (!row) throw await whyRefused(db, fieldId, expectedVersion);
  await db.update(linkRuns).set({ current: false }).where(and(eq(linkRuns.fieldId, fieldId), eq(linkRuns.current, true)));
  await enqueueIngest(fieldId);
  await audit(db, {
    action: 'field.detection_changed', actorId: by.id, actorEmail: by.email, targetType: 'field', targetId: fieldId, ip: by.ip,
    details: { settings },
  });
  return { id: fieldId, status: 'ingesting' as const, version: row.version };
}

/** The error that explains why the guarded update matched nothing. */
async function whyRefused(db: Db, fieldId: string, expectedVersion: number): Promise<HttpError> {
  const [f] = await db.select({ status: fields.status, version: fields.version, progress: fields.progress }).from(fields).where(eq(fields.id, fieldId));
  if (!f) return new HttpError(404, 'not_found', 'That field was not found.');
  if (f.status === 'approved') return conflict('This field is approved; send it back before detecting vesicles again.');
  if (!(REDETECTABLE as readonly string[]).includes(f.status) || (f.progress && f.progress.fraction < 1)) {
    return conflict('This field is being processed; wait until the job has finished, then detect again.');
  }
  if (f.version !== expectedVersion) return new HttpError(409, 'stale_version', 'The field changed since you opened this page; reload it, check the settings and detect again.');
  return conflict('The field cannot be detected again now; reload the page.');
}
