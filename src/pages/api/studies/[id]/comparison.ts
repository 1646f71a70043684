import type { APIRoute } from 'astro';
import { researchUseReply } from '../../../../lib/reporting/researchUse';
import { handle } from '../../../../lib/http/respond';
import { studyComparisonFor } from '../../../../lib/reporting/routeSelection';

/** Marker fractions per sample by group, and a comparison of two groups (?groupA=..&groupB=..). */
export const GET = handle(async (ctx) => {
  const { result } = await studyComparisonFor(ctx);
  return Response.json(researchUseReply(result), { headers: { 'cache-control': 'private, no-store' } });
}) satisfies APIRoute;
