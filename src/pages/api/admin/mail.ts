import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { HttpError } from '../../../lib/http/errors';
import { requireRole } from '../../../lib/auth/session';
import { config } from '../../../lib/config';
import { readSink } from '../../../lib/mail/sinkReader';

/** The local SMTP sink's messages, for admins, while the embedded setup runs. */
export const GET = handle(async (ctx) => {
  requireRole(ctx.locals, ['admin'], 'read the outbox');
  const dir = config().MAIL_SINK_DIR;
  if (!dir) throw new HttpError(404, 'not_found', 'No local mail sink is configured (MAIL_SINK_DIR); mail goes to a real relay.');
  return Response.json({ messages: await readSink(dir) });
}) satisfies APIRoute;
