import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { requireUser, requireStudyAction } from '../../../lib/auth/session';
import { appDb } from '../../../lib/services/appDb';
import { getStorage } from '../../../lib/storage/client';
import { createStagedUpload } from '../../../lib/uploads/staging';
import { uploadLimits } from '../../../lib/uploads/limits';
import { PresignRequest } from '../../../lib/schemas/fields';

/** A presigned PUT for one file: the browser sends the bytes straight to the bucket. */
export const POST = handle(async (ctx) => {
  requireUser(ctx.locals);
  const body = await parseJson(ctx.request, PresignRequest);
  const { user } = await requireStudyAction(await appDb(), ctx.locals, body.studyId, 'sample.write', 'upload fields');
  const reply = await createStagedUpload(await getStorage(), user.id, body.sizeBytes, uploadLimits());
  return Response.json(reply, { status: 201 });
}) satisfies APIRoute;
