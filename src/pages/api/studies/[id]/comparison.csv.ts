import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, parseQuery, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { getStudy } from '../../../../lib/db/queries/studies';
import { getStudyComparison } from '../../../../lib/db/queries/results';
import { ComparisonQuery, assertSourceAllowed } from '../../../../lib/reporting/comparisonQuery';
import { comparisonCsv } from '../../../../lib/reporting/exports';
import { safeFileName } from '../../../../lib/reporting/csv';

/** The study comparison as CSV. */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user, membership } = await requireStudyAction(db, ctx.locals, id, 'results.read', 'see results of this study');
  const q = parseQuery(ctx.url, ComparisonQuery);
  assertSourceAllowed(user, membership, q.source);
  const study = (await getStudy(db, id))!;
  const result = await getStudyComparison(db, { id, name: study.name }, q.source, q.groupA ?? null, q.groupB ?? null);
  const name = safeFileName(`comparison_${q.groupA ?? 'all'}_vs_${q.groupB ?? 'all'}.csv`);
  return new Response(comparisonCsv(result), {
    headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"`, 'cache-control': 'private, no-store' },
  });
}) satisfies APIRoute;
