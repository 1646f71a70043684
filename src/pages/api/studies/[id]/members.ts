import type { APIRoute } from 'astro';
import { and, eq } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { appAccessCache, requireStudyAction } from '../../../../lib/auth/session';
import { notFound } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { studyMembers, users } from '../../../../lib/db/schema';
import { audit } from '../../../../lib/audit';
import { MembershipRequest } from '../../../../lib/schemas/people';
import { clientAddress } from '../../../../lib/http/context';

/** Admin adds, changes (role) or removes (role null) a study member. */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'study.manage', 'manage study members');
  const body = await parseJson(ctx.request, MembershipRequest);
  const [target] = await db.select({ id: users.id }).from(users).where(eq(users.id, body.userId));
  if (!target) throw notFound('That person');
  if (body.role === null) {
    await db.delete(studyMembers).where(and(eq(studyMembers.studyId, id), eq(studyMembers.userId, body.userId)));
  } else {
    await db.insert(studyMembers).values({ studyId: id, userId: body.userId, role: body.role })
      .onConflictDoUpdate({ target: [studyMembers.studyId, studyMembers.userId], set: { role: body.role } });
  }
  appAccessCache(db)?.forget({ studyId: id, memberId: body.userId });
  await audit(db, { action: 'membership.changed', actorId: user.id, actorEmail: user.email, targetType: 'study', targetId: id, ip: clientAddress(ctx), details: body });
  return new Response(null, { status: 204 });
}) satisfies APIRoute;
