import type { APIRoute } from 'astro';
import { handle } from '../../lib/http/respond';
import { parseJson } from '../../lib/http/parse';
import { ResetRequest } from '../../lib/schemas/people';
import { clientAddress } from '../../lib/http/context';
import { appDb } from '../../lib/services/appDb';
import { requestPasswordReset } from '../../lib/services/people/requestPasswordReset';

/**
 * Public: asks for a reset link. Answers the same, in the same time, whether or not the address has an account:
 * the lookup and the mail happen in the job queue afterwards. Limited per address (429) and per e-mail (silently).
 */
export const POST = handle(async (ctx) => {
  const { email } = await parseJson(ctx.request, ResetRequest);
  await requestPasswordReset(await appDb(), email, clientAddress(ctx));
  return Response.json({ message: 'If that address has an account, a reset link is on its way.' }, { status: 202 });
}) satisfies APIRoute;
