import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, parseQuery, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { getStudy } from '../../../../lib/db/queries/studies';
import { getStudyComparison } from '../../../../lib/db/queries/results';
import { ComparisonQuery, assertSourceAllowed } from '../../../../lib/reporting/comparisonQuery';

/** Marker fractions per sample by group, and a comparison of two groups (?groupA=..&groupB=..). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user, membership } = await requireStudyAction(db, ctx.locals, id, 'results.read', 'see results of this study');
  const q = parseQuery(ctx.url, ComparisonQuery);
  assertSourceAllowed(user, membership, q.source);
  const study = (await getStudy(db, id))!;
  const result = await getStudyComparison(db, { id, name: study.name }, q.source, q.groupA ?? null, q.groupB ?? null);
  return Response.json(result, { headers: { 'cache-control': 'private, no-store' } });
}) satisfies APIRoute;
