import type { APIRoute } from 'astro';
import { asc, eq } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { conflict } from '../../../../lib/http/errors';
import { requireStudyAction } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { samples } from '../../../../lib/db/schema';
import { audit } from '../../../../lib/audit';
import { SampleCreateRequest } from '../../../../lib/schemas/fields';
import { clientAddress } from '../../../../lib/http/context';
import { identifyingWarnings } from '../../../../lib/reporting/identifyingWarnings';

export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  await requireStudyAction(db, ctx.locals, id, 'study.read', 'list samples');
  return Response.json({ samples: await db.select().from(samples).where(eq(samples.studyId, id)).orderBy(asc(samples.code)) });
}) satisfies APIRoute;

/**
 * Biologists record a de-identified sample. The reply carries `warnings`: the sample form's messages when the code
 * or any free text looks like it holds a name, initials, a record number or a full date, so a script or another client hears them too; the sample is
 * recorded all the same (the check is a heuristic, and the form has already asked for confirmation).
 */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'sample.write', 'record samples');
  const body = await parseJson(ctx.request, SampleCreateRequest);
  const [row] = await db.insert(samples).values({ ...body, studyId: id }).onConflictDoNothing().returning({ id: samples.id });
  if (!row) throw conflict(`This study already has a sample coded ${body.code}.`);
  await audit(db, { action: 'sample.created', actorId: user.id, actorEmail: user.email, targetType: 'sample', targetId: row.id, ip: clientAddress(ctx), details: { code: body.code } });
  const warnings = identifyingWarnings([
    { what: 'The code', value: body.code, kind: 'code' }, { what: 'The group label', value: body.groupLabel }, { what: 'The source', value: body.source },
    { what: 'The isolation method', value: body.isolationMethod }, { what: 'The substrate', value: body.substrate }, { what: 'The notes', value: body.notes },
  ]);
  return Response.json({ id: row.id, warnings }, { status: 201 });
}) satisfies APIRoute;
