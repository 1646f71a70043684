import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { getStudy, listMembers, listPanel } from '../../../../lib/db/queries/studies';

export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  await requireStudyAction(db, ctx.locals, id, 'study.read', 'open this study');
  const [study, members, panel] = await Promise.all([getStudy(db, id), listMembers(db, id), listPanel(db, id)]);
  return Response.json({ study, members, panel });
}) satisfies APIRoute;
