import type { APIRoute } from 'astro';
import { z } from 'zod';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { actor } from '../../../../lib/http/actor';
import { appDb } from '../../../../lib/services/appDb';
import { getField } from '../../../../lib/services/fields/getField';
import { deleteField } from '../../../../lib/services/fields/deleteField';

/** A field with its files, tile layers, status and job progress (polled by the progress bar). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { field, sampleCode } = await requireFieldAction(db, ctx.locals, id, 'study.read', 'open this field');
  return Response.json(await getField(db, field, sampleCode));
}) satisfies APIRoute;

/** The field version the person saw when they confirmed the removal. */
const RemoveFieldRequest = z.object({ expectedVersion: z.number().int().min(1) });

/**
 * Removes a field that is neither approved nor in any release (a failed upload, say, which would
 * otherwise block its sample's release): its rows go by cascade, then its objects in storage.
 */
export const DELETE = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user, sampleCode } = await requireFieldAction(db, ctx.locals, id, 'field.remove', 'remove fields');
  const body = await parseJson(ctx.request, RemoveFieldRequest);
  return Response.json(await deleteField(db, actor(user, ctx), id, sampleCode, body.expectedVersion));
}) satisfies APIRoute;
