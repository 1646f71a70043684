import type { APIRoute } from 'astro';
import { handle } from '../../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../../lib/http/parse';
import { getDb } from '../../../../../lib/db/client';
import { requireFieldAction } from '../../../../../lib/auth/fieldAccess';
import { listRegistrations } from '../../../../../lib/db/queries/registrations';
import { saveRegistration } from '../../../../../lib/registration/saveRegistration';
import { audit } from '../../../../../lib/audit';
import { RegistrationSaveRequest } from '../../../../../lib/schemas/registration';
import { clientAddress } from '../../../../../lib/http/context';

/** Every saved version of the field's registration (biologists of the study may look). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  await requireFieldAction(db, ctx.locals, id, 'study.read', 'view registrations');
  return Response.json({ versions: await listRegistrations(db, id) });
}) satisfies APIRoute;

/** Saves a new version (analysts and admins); 409 when based on a stale version. */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user, field } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'save registrations');
  const body = await parseJson(ctx.request, RegistrationSaveRequest);
  const { registration, evaluation } = await saveRegistration(db, field, user.id, body);
  await audit(db, { action: 'registration.saved', actorId: user.id, actorEmail: user.email, targetType: 'field', targetId: id, ip: clientAddress(ctx), details: { version: registration.version, pairs: body.pairs.length, freNm: evaluation.freNm } });
  return Response.json({ version: registration.version, freNm: evaluation.freNm, treNm: evaluation.leaveOneOutTreRmsNm, description: evaluation.description, warnings: evaluation.warnings }, { status: 201 });
}) satisfies APIRoute;
