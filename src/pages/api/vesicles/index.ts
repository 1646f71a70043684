import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { parseQuery } from '../../../lib/http/parse';
import { requireUser } from '../../../lib/auth/session';
import { requireScopeAction } from '../../../lib/auth/scopeAccess';
import { VesicleQuery } from '../../../lib/schemas/vesicles';
import { appDb } from '../../../lib/services/appDb';
import { pageVesicleTable } from '../../../lib/services/vesicles/pageVesicleTable';

/** One page of the vesicle table of a field or a sample (current linking), sorted and filtered on the server. */
export const GET = handle(async (ctx) => {
  requireUser(ctx.locals);
  const q = parseQuery(ctx.url, VesicleQuery);
  const db = await appDb();
  const { studyId } = await requireScopeAction(db, ctx.locals, q, 'study.read', 'see vesicle tables');
  return Response.json(await pageVesicleTable(db, studyId, q));
}) satisfies APIRoute;
