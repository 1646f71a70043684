import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { studyComparisonFor } from '../../../../lib/reporting/routeSelection';
import { comparisonCsv } from '../../../../lib/reporting/exports';
import { safeFileName } from '../../../../lib/reporting/csv';

/** The study comparison as CSV. */
export const GET = handle(async (ctx) => {
  const { q, result } = await studyComparisonFor(ctx);
  const name = safeFileName(`comparison_${q.groupA ?? 'all'}_vs_${q.groupB ?? 'all'}.csv`);
  return new Response(comparisonCsv(result), {
    headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"`, 'cache-control': 'private, no-store' },
  });
}) satisfies APIRoute;
