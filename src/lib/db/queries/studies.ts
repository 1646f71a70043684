import { eq, asc, sql, and } from 'drizzle-orm';
import type { Db } from '../client';
import { studies, studyMembers, samples, users, markerChannels } from '../schema';
import type { SessionUser } from '../../auth/permissions';

/** Studies the user may open (admins: all), with their study role and sample count. */
export async function listStudiesFor(db: Db, user: SessionUser) {
  const sampleCount = sql<number>`(select count(*)::int from ${samples} where ${samples.studyId} = ${studies.id})`;
  const q = db
    .select({ id: studies.id, name: studies.name, description: studies.description, createdAt: studies.createdAt, role: studyMembers.role, samples: sampleCount })
    .from(studies)
    .leftJoin(studyMembers, and(eq(studyMembers.studyId, studies.id), eq(studyMembers.userId, user.id)))
    .orderBy(asc(studies.name));
  const rows = await q;
  return user.role === 'admin' ? rows : rows.filter((r) => r.role !== null);
}

export async function getStudy(db: Db, studyId: string) {
  const [study] = await db.select().from(studies).where(eq(studies.id, studyId));
  return study ?? null;
}

export async function listMembers(db: Db, studyId: string) {
  return db
    .select({ userId: users.id, name: users.name, email: users.email, role: studyMembers.role })
    .from(studyMembers)
    .innerJoin(users, eq(users.id, studyMembers.userId))
    .where(eq(studyMembers.studyId, studyId))
    .orderBy(asc(users.name));
}

export async function listPanel(db: Db, studyId: string) {
  return db.select().from(markerChannels).where(eq(markerChannels.studyId, studyId)).orderBy(asc(markerChannels.channelIndex));
}
