import type { APIRoute } from 'astro';
import { handle } from '../../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../../lib/http/parse';
import { requireFieldAction } from '../../../../../lib/auth/fieldAccess';
import { actor } from '../../../../../lib/http/actor';
import { RegistrationSaveRequest } from '../../../../../lib/schemas/registration';
import { appDb } from '../../../../../lib/services/appDb';
import { listRegistrationVersions } from '../../../../../lib/services/fields/listRegistrationVersions';
import { recordRegistration } from '../../../../../lib/services/fields/recordRegistration';

/** Every saved version of the field's registration (biologists of the study may look). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  await requireFieldAction(db, ctx.locals, id, 'study.read', 'view registrations');
  return Response.json({ versions: await listRegistrationVersions(db, id) });
}) satisfies APIRoute;

/** Saves a new version (analysts and admins); 409 when based on a stale version. */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user, field } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'save registrations');
  const body = await parseJson(ctx.request, RegistrationSaveRequest);
  return Response.json(await recordRegistration(db, actor(user, ctx), field, body), { status: 201 });
}) satisfies APIRoute;
