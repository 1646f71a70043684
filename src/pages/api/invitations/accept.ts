import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { getDb } from '../../../lib/db/client';
import { setPasswordWithToken } from '../../../lib/auth/oneTimeLinks';
import { audit } from '../../../lib/audit';
import { SetPasswordRequest } from '../../../lib/schemas/people';
import { clientAddress } from '../../../lib/http/context';

/** Public: the invitee (or a reset) sets a password with a one-time token. */
export const POST = handle(async (ctx) => {
  const body = await parseJson(ctx.request, SetPasswordRequest);
  const db = await getDb();
  const user = await setPasswordWithToken(db, body.token, body.password);
  await audit(db, { action: 'user.password_set', actorId: user.id, actorEmail: user.email, targetType: 'user', targetId: user.id, ip: clientAddress(ctx), details: { via: user.purpose } });
  return Response.json({ email: user.email });
}) satisfies APIRoute;
