import type { APIRoute } from 'astro';
import { handle } from '../../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../../lib/http/parse';
import { getDb } from '../../../../../lib/db/client';
import { requireFieldAction } from '../../../../../lib/auth/fieldAccess';
import { getStorage } from '../../../../../lib/storage/client';
import { getBytes } from '../../../../../lib/storage/objects';
import { detectionKey } from '../../../../../lib/storage/keys';
import { proposePairs } from '../../../../../lib/registration/proposePairs';
import { HttpError } from '../../../../../lib/http/errors';
import { AutoPairRequest } from '../../../../../lib/schemas/registration';
import type { FieldDetection } from '../../../../../lib/jobs/detectionTypes';

/** Proposes fiducial pairs without clicks (RANSAC of the chosen model over detected beads/vesicles and spots); nothing is saved. */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { field } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'find pairs');
  const body = await parseJson(ctx.request, AutoPairRequest);
  if (!['ready', 'registered', 'linked'].includes(field.status)) throw new HttpError(409, 'not_ready', 'The field has not been processed yet.');
  const detection = JSON.parse(new TextDecoder().decode(await getBytes(await getStorage(), detectionKey(id)))) as FieldDetection;
  return Response.json(proposePairs(detection, { afmPixelNm: field.afmPixelNm ?? 1, flPixelNm: field.flPixelNm ?? 1, inlierTolerancePx: body.inlierTolerancePx, model: body.model }));
}) satisfies APIRoute;
