import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { appDb } from '../../../../lib/services/appDb';
import { getStudyOverview } from '../../../../lib/services/studies/getStudyOverview';

export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  await requireStudyAction(db, ctx.locals, id, 'study.read', 'open this study');
  return Response.json(await getStudyOverview(db, id));
}) satisfies APIRoute;
