import type { APIRoute } from 'astro';
import { handle } from '../../lib/http/respond';
import { parseJson } from '../../lib/http/parse';
import { HttpError } from '../../lib/http/errors';
import { getDb } from '../../lib/db/client';
import { config } from '../../lib/config';
import { ResetRequest } from '../../lib/schemas/people';
import { clientAddress } from '../../lib/http/context';
import { resetRequestVerdict } from '../../lib/auth/rateLimit';
import { enqueuePasswordResetMail } from '../../lib/auth/passwordResetMail';

/**
 * Public: asks for a reset link. Answers the same, in the same time, whether or not the address has an account:
 * the lookup and the mail happen in the job queue afterwards. Limited per address (429) and per e-mail (silently).
 */
export const POST = handle(async (ctx) => {
  const { email } = await parseJson(ctx.request, ResetRequest);
  const ip = clientAddress(ctx);
  const verdict = await resetRequestVerdict(await getDb(), email, ip);
  if (!verdict.address.allowed) {
    throw new HttpError(429, 'too_many_requests', `Too many reset requests from this network. Wait ${Math.ceil(verdict.address.retryAfterS / 60)} minute(s) and try again.`);
  }
  if (verdict.mail) await enqueuePasswordResetMail(config().DATABASE_URL, { email, ip });
  return Response.json({ message: 'If that address has an account, a reset link is on its way.' }, { status: 202 });
}) satisfies APIRoute;
