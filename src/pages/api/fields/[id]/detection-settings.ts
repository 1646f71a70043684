import type { APIRoute } from 'astro';
import { and, eq, inArray, sql } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { conflict, HttpError } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { fields, linkRuns } from '../../../../lib/db/schema';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { enqueueIngest } from '../../../../lib/jobs/enqueue';
import { DetectionSettingsRequest } from '../../../../lib/schemas/detectionSettings';
import { audit } from '../../../../lib/audit';
import { clientAddress } from '../../../../lib/http/context';

/** Statuses from which a field may be detected again (not while a job runs, not once approved). */
const REDETECTABLE = ['ready', 'registered', 'linked', 'failed'] as const;

/**
 * Saves a field's vesicle-detection settings (null = automatic defaults) and queues its ingestion again
 * (analysts). The job ends "registered" when the field has a registration, else "ready": linking must be re-run,
 * and the field's current link run stops being current at once.
 */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'change detection settings');
  const body = await parseJson(ctx.request, DetectionSettingsRequest);
  // one guarded update: the status, version and "no linking job running" checks cannot race the worker
  const [row] = await db.update(fields)
    .set({ detectionSettings: body.settings, status: 'ingesting', failureReason: null, progress: { stage: 'queued', fraction: 0 }, version: sql`${fields.version} + 1`, updatedAt: sql`now()` })
    .where(and(
      eq(fields.id, id), eq(fields.version, body.expectedVersion), inArray(fields.status, [...REDETECTABLE]),
      sql`coalesce((${fields.progress}->>'fraction')::float8, 1) >= 1`,
    ))
    .returning({ version: fields.version });
  if (!row) throw await whyRefused(id, body.expectedVersion);
  // the vesicles change, so the field's linking no longer describes them: it stops being current (the rows stay,
  // and a release keeps its own) until linking is run again
  await db.update(linkRuns).set({ current: false }).where(and(eq(linkRuns.fieldId, id), eq(linkRuns.current, true)));
  await enqueueIngest(id);
  await audit(db, {
    action: 'field.detection_changed', actorId: user.id, actorEmail: user.email, targetType: 'field', targetId: id, ip: clientAddress(ctx),
    details: { settings: body.settings },
  });
  return Response.json({ id, status: 'ingesting', version: row.version }, { status: 202 });
}) satisfies APIRoute;

/** The 409 that explains why the guarded update matched nothing. */
async function whyRefused(id: string, expectedVersion: number): Promise<HttpError> {
  const [f] = await (await getDb()).select({ status: fields.status, version: fields.version, progress: fields.progress }).from(fields).where(eq(fields.id, id));
  if (!f) return new HttpError(404, 'not_found', 'That field was not found.');
  if (f.status === 'approved') return conflict('This field is approved; send it back before detecting vesicles again.');
  if (!(REDETECTABLE as readonly string[]).includes(f.status) || (f.progress && f.progress.fraction < 1)) {
    return conflict('This field is being processed; wait until the job has finished, then detect again.');
  }
  if (f.version !== expectedVersion) return new HttpError(409, 'stale_version', 'The field changed since you opened this page; reload it, check the settings and detect again.');
  return conflict('The field cannot be detected again now; reload the page.');
}
