import type { APIRoute } from 'astro';
import { researchUseReply } from '../../../../lib/reporting/researchUse';
import { handle } from '../../../../lib/http/respond';
import { sampleResultsWithGroup } from '../../../../lib/reporting/sampleWithGroup';
import { sampleSelectionFor } from '../../../../lib/reporting/routeSelection';

/** A sample's results: latest release (everyone in the study) or current analysis (lab members). */
export const GET = handle(async (ctx) => {
  const { db, sel } = await sampleSelectionFor(ctx);
  const results = await sampleResultsWithGroup(db, sel);
  return Response.json(researchUseReply(results), { headers: { 'cache-control': 'private, no-store' } });
}) satisfies APIRoute;
