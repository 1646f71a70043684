import type { APIRoute } from 'astro';
import { z } from 'zod';
import { handle } from '../../../../lib/http/respond';
import { parseParams, parseQuery, IdParam } from '../../../../lib/http/parse';
import { requireUser } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { getSampleResults } from '../../../../lib/db/queries/results';
import { selectSampleResults } from '../../../../lib/reporting/access';

const Query = z.object({ source: z.enum(['released', 'current']).default('released') });

/** A sample's results: latest release (everyone in the study) or current analysis (lab members). */
export const GET = handle(async (ctx) => {
  requireUser(ctx.locals);
  const { id } = parseParams(ctx.params, IdParam);
  const { source } = parseQuery(ctx.url, Query);
  const db = await getDb();
  const sel = await selectSampleResults(db, ctx.locals, id, source);
  const results = await getSampleResults(db, sel.sample, sel);
  return Response.json(results, { headers: { 'cache-control': 'private, no-store' } });
}) satisfies APIRoute;
