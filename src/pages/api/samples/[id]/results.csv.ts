import type { APIRoute } from 'astro';
import { z } from 'zod';
import { handle } from '../../../../lib/http/respond';
import { parseParams, parseQuery, IdParam } from '../../../../lib/http/parse';
import { requireUser } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { getSampleResults } from '../../../../lib/db/queries/results';
import { selectSampleResults } from '../../../../lib/reporting/access';
import { sampleSummaryCsv } from '../../../../lib/reporting/exports';
import { safeFileName } from '../../../../lib/reporting/csv';

const Query = z.object({ source: z.enum(['released', 'current']).default('released') });

/** Summary CSV of a sample (marker fractions and phenotype counts with Wilson intervals). */
export const GET = handle(async (ctx) => {
  requireUser(ctx.locals);
  const { id } = parseParams(ctx.params, IdParam);
  const { source } = parseQuery(ctx.url, Query);
  const db = await getDb();
  const sel = await selectSampleResults(db, ctx.locals, id, source);
  const results = await getSampleResults(db, sel.sample, sel);
  const name = safeFileName(`${sel.sample.code}_${sel.release ? `release-v${sel.release.version}` : 'preview'}_summary.csv`);
  return new Response(sampleSummaryCsv(results), {
    headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"`, 'cache-control': 'private, no-store' },
  });
}) satisfies APIRoute;
