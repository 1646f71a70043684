import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { SetPasswordRequest } from '../../../lib/schemas/people';
import { clientAddress } from '../../../lib/http/context';
import { appDb } from '../../../lib/services/appDb';
import { acceptInvitation } from '../../../lib/services/people/acceptInvitation';

/** Public: the invitee (or a reset) sets a password with a one-time token. */
export const POST = handle(async (ctx) => {
  const body = await parseJson(ctx.request, SetPasswordRequest);
  return Response.json(await acceptInvitation(await appDb(), clientAddress(ctx), body.token, body.password));
}) satisfies APIRoute;
