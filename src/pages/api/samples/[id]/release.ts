import type { APIRoute } from 'astro';
import { z } from 'zod';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireRole } from '../../../../lib/auth/session';
import { requireSampleAction } from '../../../../lib/auth/sampleAccess';
import { actor } from '../../../../lib/http/actor';
import { appDb } from '../../../../lib/services/appDb';
import { releaseSample } from '../../../../lib/services/samples/releaseSample';

const ReleaseRequest = z.object({ expectedVersion: z.number().int().min(0).optional() });

/** Releases the sample's current analysis to the study's collaborators as a new version. */
export const POST = handle(async (ctx) => {
  requireRole(ctx.locals, ['admin', 'biologist', 'analyst'], 'release results');
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user, sample } = await requireSampleAction(db, ctx.locals, id, 'results.release', 'release results of this study');
  // Optional body { expectedVersion }: the latest release version the person saw (0 for none).
  const hasBody = (ctx.request.headers.get('content-length') ?? '0') !== '0' || ctx.request.headers.has('content-type');
  const body = hasBody ? await parseJson(ctx.request, ReleaseRequest) : { expectedVersion: undefined };
  return Response.json(await releaseSample(db, actor(user, ctx), sample, body.expectedVersion), { status: 201 });
}) satisfies APIRoute;
