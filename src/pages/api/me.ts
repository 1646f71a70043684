import type { APIRoute } from 'astro';
import { handle } from '../../lib/http/respond';
import { requireUser } from '../../lib/auth/session';

export const GET = handle((ctx) => Response.json({ user: requireUser(ctx.locals) })) satisfies APIRoute;
