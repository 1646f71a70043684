import { and, eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { studyMembers, users } from '../../db/schema';
import { notFound } from '../../http/errors';
import { appAccessCache } from '../../auth/session';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { MemberRole } from '../../auth/permissions';

/**
 * Adds a person to a study, changes their study role, or removes them (`role` null); the access memory forgets the
 * old membership at once.
 * @throws HttpError 404 `not_found` for an unknown person
 */
export async function setMembership(db: Db, by: Actor, studyId: string, change: { userId: string; role: MemberRole | null }): Promise<void> {
  const [target] = await db.select({ id: users.id }).from(users).where(eq(users.id, change.userId));
  if (!target) throw notFound('That person');
  if (change.role === null) {
    await db.delete(studyMembers).where(and(eq(studyMembers.studyId, studyId), eq(studyMembers.userId, change.userId)));
  } else {
    await db.insert(studyMembers).values({ studyId, userId: change.userId, role: change.role })
      .onConflictDoUpdate({ target: [studyMembers.studyId, studyMembers.userId], set: { role: change.role } });
  }
  appAccessCache(db)?.forget({ studyId, memberId: change.userId });
  await audit(db, { action: 'membership.changed', actorId: by.id, actorEmail: by.email, targetType: 'study', targetId: studyId, ip: by.ip, details: change });
}
