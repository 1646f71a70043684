import type { APIRoute } from 'astro';
import { researchUseReply } from '../../../lib/reporting/researchUse';
import { handle } from '../../../lib/http/respond';
import { parseQuery } from '../../../lib/http/parse';
import { requireUser } from '../../../lib/auth/session';
import { requireScopeAction } from '../../../lib/auth/scopeAccess';
import { getDb } from '../../../lib/db/client';
import { pageVesicles } from '../../../lib/db/queries/vesicles';
import { getPanel } from '../../../lib/db/queries/sampleSelection';
import { VesicleQuery } from '../../../lib/schemas/vesicles';

/** One page of the vesicle table of a field or a sample (current linking), sorted and filtered on the server. */
export const GET = handle(async (ctx) => {
  requireUser(ctx.locals);
  const q = parseQuery(ctx.url, VesicleQuery);
  const db = await getDb();
  const { studyId } = await requireScopeAction(db, ctx.locals, q, 'study.read', 'see vesicle tables');
  const [page, panel] = await Promise.all([pageVesicles(db, q), getPanel(db, studyId)]);
  return Response.json(researchUseReply({ ...page, markers: panel.map((p) => p.marker) }));
}) satisfies APIRoute;
