import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { requireRole } from '../../../../lib/auth/session';
import { getStorage } from '../../../../lib/storage/client';
import { inspectStagedUpload } from '../../../../lib/uploads/staging';
import { uploadLimits } from '../../../../lib/uploads/limits';

/** What the server read from an uploaded file (size, bit depth, pixel size, pages), for the user to confirm. */
export const POST = handle(async (ctx) => {
  // Staged keys live under the uploader's own id, so nobody can inspect another person's upload.
  const user = requireRole(ctx.locals, ['biologist', 'admin'], 'upload fields');
  const { id } = parseParams(ctx.params, IdParam);
  const { reply } = await inspectStagedUpload(await getStorage(), user.id, id, uploadLimits());
  return Response.json(reply);
}) satisfies APIRoute;
