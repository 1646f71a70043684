import type { APIRoute } from 'astro';
import { eq } from 'drizzle-orm';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { requireUser, requireStudyAction } from '../../../lib/auth/session';
import { notFound } from '../../../lib/http/errors';
import { getDb } from '../../../lib/db/client';
import { samples } from '../../../lib/db/schema';
import { listPanel } from '../../../lib/db/queries/studies';
import { getStorage } from '../../../lib/storage/client';
import { createField } from '../../../lib/uploads/createField';
import { uploadLimits } from '../../../lib/uploads/limits';
import { enqueueIngest } from '../../../lib/jobs/enqueue';
import { audit } from '../../../lib/audit';
import { FieldCreateRequest } from '../../../lib/schemas/fields';
import { clientAddress } from '../../../lib/http/context';
import { identifyingWarnings } from '../../../lib/reporting/identifyingWarnings';

/** Confirms a field from inspected uploads and queues its ingestion. */
export const POST = handle(async (ctx) => {
  requireUser(ctx.locals);
  const body = await parseJson(ctx.request, FieldCreateRequest);
  const db = await getDb();
  const [sample] = await db.select().from(samples).where(eq(samples.id, body.sampleId));
  if (!sample) throw notFound('That sample');
  const { user } = await requireStudyAction(db, ctx.locals, sample.studyId, 'sample.write', 'upload fields');
  const panel = await listPanel(db, sample.studyId);
  const field = await createField(db, await getStorage(), user.id, body, panel.length, uploadLimits());
  await enqueueIngest(field.id);
  await audit(db, { action: 'field.uploaded', actorId: user.id, actorEmail: user.email, targetType: 'field', targetId: field.id, ip: clientAddress(ctx), details: { sample: sample.code, name: field.name } });
  // the field name and the file names reach collaborators' tables and exports: warn when they look identifying
  const warnings = identifyingWarnings([
    { what: 'The field name', value: body.name },
    ...Object.values(body.fileNames).map((n) => ({ what: `The file name "${n}"`, value: n.replace(/\.(ome\.)?tiff?$/i, '') })),
  ]);
  return Response.json({ id: field.id, status: field.status, warnings }, { status: 201 });
}) satisfies APIRoute;
