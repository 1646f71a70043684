import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { sampleResultsWithGroup } from '../../../../lib/reporting/sampleWithGroup';
import { sampleSelectionFor } from '../../../../lib/reporting/routeSelection';
import { sampleSummaryCsv } from '../../../../lib/reporting/exports';
import { safeFileName } from '../../../../lib/reporting/csv';

/** Summary CSV of a sample (marker fractions and phenotype shares with 95% intervals over its fields, per-field counts). */
export const GET = handle(async (ctx) => {
  const { db, sel } = await sampleSelectionFor(ctx);
  const results = await sampleResultsWithGroup(db, sel);
  const name = safeFileName(`${sel.sample.code}_${sel.release ? `release-v${sel.release.version}` : 'preview'}_summary.csv`);
  return new Response(sampleSummaryCsv(results), {
    headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"`, 'cache-control': 'private, no-store' },
  });
}) satisfies APIRoute;
