import type { APIRoute } from 'astro';
import { identifyingWarnings } from '../../../lib/reporting/identifyingWarnings';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { requireUser, requireRole } from '../../../lib/auth/session';
import { getDb } from '../../../lib/db/client';
import { studies } from '../../../lib/db/schema';
import { listStudiesFor } from '../../../lib/db/queries/studies';
import { audit } from '../../../lib/audit';
import { StudyCreateRequest } from '../../../lib/schemas/people';
import { clientAddress } from '../../../lib/http/context';

export const GET = handle(async (ctx) => {
  const user = requireUser(ctx.locals);
  return Response.json({ studies: await listStudiesFor(await getDb(), user) });
}) satisfies APIRoute;

/** Admins create studies, then add members with their study role. */
export const POST = handle(async (ctx) => {
  const admin = requireRole(ctx.locals, ['admin'], 'create studies');
  const body = await parseJson(ctx.request, StudyCreateRequest);
  const db = await getDb();
  const [row] = await db.insert(studies).values({ ...body, createdBy: admin.id }).returning({ id: studies.id });
  await audit(db, { action: 'study.created', actorId: admin.id, actorEmail: admin.email, targetType: 'study', targetId: row.id, ip: clientAddress(ctx), details: { name: body.name } });
  const warnings = identifyingWarnings([{ what: 'The study name', value: body.name }, { what: 'The description', value: body.description }]);
  return Response.json({ id: row.id, warnings }, { status: 201 });
}) satisfies APIRoute;
