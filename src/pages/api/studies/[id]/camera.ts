import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { actor } from '../../../../lib/http/actor';
import { CameraModelRequest } from '../../../../lib/schemas/cameraModel';
import { appDb } from '../../../../lib/services/appDb';
import { getCameraModel } from '../../../../lib/services/studies/getCameraModel';
import { setCameraModel } from '../../../../lib/services/studies/setCameraModel';

/** The study's camera noise model (lab members); null when not set (linking then estimates it from each frame). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  await requireStudyAction(db, ctx.locals, id, 'study.read', 'see this study\'s analysis settings');
  return Response.json({ camera: await getCameraModel(db, id) });
}) satisfies APIRoute;

/**
 * Sets the camera noise model used by linking (analysts, admins): offset, gain and read noise together, or null to
 * estimate them from each frame. Fields already linked keep their results until they are linked again.
 */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'field.analyse', 'change the camera model');
  const body = await parseJson(ctx.request, CameraModelRequest);
  return Response.json({ camera: await setCameraModel(db, actor(user, ctx), id, body.camera) });
}) satisfies APIRoute;
