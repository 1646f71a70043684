import type { APIRoute } from 'astro';
import { eq } from 'drizzle-orm';
import { handle } from '../../lib/http/respond';
import { parseJson } from '../../lib/http/parse';
import { getDb } from '../../lib/db/client';
import { users } from '../../lib/db/schema';
import { issueToken } from '../../lib/auth/oneTimeLinks';
import { send, passwordResetMail } from '../../lib/mail';
import { config } from '../../lib/config';
import { audit } from '../../lib/audit';
import { ResetRequest } from '../../lib/schemas/people';
import { clientAddress } from '../../lib/http/context';

/** Public: asks for a reset link. Answers the same whether or not the address has an account. */
export const POST = handle(async (ctx) => {
  const { email } = await parseJson(ctx.request, ResetRequest);
  const db = await getDb();
  const [user] = await db.select().from(users).where(eq(users.email, email));
  if (user?.active && user.passwordHash) {
    const token = await issueToken(db, user.id, 'reset');
    await send(passwordResetMail({ to: email, name: user.name, link: new URL(`/invite/${token}`, config().PUBLIC_URL).toString() }));
    await audit(db, { action: 'user.password_reset_requested', actorEmail: email, targetType: 'user', targetId: user.id, ip: clientAddress(ctx) });
  }
  return Response.json({ message: 'If that address has an account, a reset link is on its way.' }, { status: 202 });
}) satisfies APIRoute;
