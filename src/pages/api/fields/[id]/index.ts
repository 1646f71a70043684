import type { APIRoute } from 'astro';
import { z } from 'zod';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { conflict, notFound } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { getFieldDetail } from '../../../../lib/db/queries/fields';
import { removeField } from '../../../../lib/db/queries/fieldRemoval';
import { getStorage } from '../../../../lib/storage/client';
import { deleteObject, deletePrefix } from '../../../../lib/storage/objects';
import { fieldPrefix } from '../../../../lib/storage/keys';
import { audit } from '../../../../lib/audit';
import { clientAddress } from '../../../../lib/http/context';

/** A field with its files, tile layers, status and job progress (polled by the progress bar). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { field, sampleCode } = await requireFieldAction(db, ctx.locals, id, 'study.read', 'open this field');
  const detail = await getFieldDetail(db, id);
  return Response.json({
    field: { ...field, sampleCode },
    files: detail.files.map(({ objectKey: _k, ...f }) => f),
    layers: detail.tiles.map((t) => ({ layer: t.layer, widthPx: t.widthPx, heightPx: t.heightPx, display: t.display })),
    registration: detail.registration,
  });
}) satisfies APIRoute;

/** The field version the person saw when they confirmed the removal. */
const RemoveFieldRequest = z.object({ expectedVersion: z.number().int().min(1) });

/**
 * Removes a field that is neither approved nor in any release (a failed upload, say, which would
 * otherwise block its sample's release): its rows go by cascade, then its objects in storage.
 */
export const DELETE = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user, sampleCode } = await requireFieldAction(db, ctx.locals, id, 'field.remove', 'remove fields');
  const body = await parseJson(ctx.request, RemoveFieldRequest);
  const out = await removeField(db, id, body.expectedVersion);
  if (!out.ok) {
    switch (out.reason) {
      case 'not_found': throw notFound('That field');
      case 'approved': throw conflict(`Field ${out.name} is approved, so it cannot be removed. Send it back first (on its field page) if it should not count.`);
      case 'processing': throw conflict(`Field ${out.name} is being processed. Wait until processing finishes or fails, then remove it.`);
      case 'released': throw conflict(`Field ${out.name} is part of released results of sample ${sampleCode} (version ${out.releaseVersions.join(', ')}), so it cannot be removed: collaborators rely on those numbers.`);
      case 'stale': throw conflict(`Field ${out.name} changed since you opened it. Reload the page to see its current state, then decide again.`);
    }
  }
  // The rows are gone; now the objects. A storage failure leaves orphans but must not undo the removal.
  let objectsRemoved = true;
  try {
    const st = await getStorage();
    const prefix = fieldPrefix(id);
    await deletePrefix(st, prefix);
    for (const key of out.objectKeys.filter((k) => !k.startsWith(prefix))) await deleteObject(st, key);
  } catch (err) {
    objectsRemoved = false;
    console.error('[fields] removed field', id, 'but not all its objects:', (err as Error).message);
  }
  await audit(db, {
    action: 'field.removed', actorId: user.id, actorEmail: user.email, targetType: 'field', targetId: id, ip: clientAddress(ctx),
    details: { name: out.field.name, status: out.field.status, sampleId: out.field.sampleId, sampleCode, objectsRemoved },
  });
  return Response.json({ removed: true, fieldId: id, name: out.field.name, objectsRemoved });
}) satisfies APIRoute;
