import { and, asc, eq, inArray } from 'drizzle-orm';
import type { Db } from '../client';
import { studies, studyMembers, samples, markerChannels } from '../schema';
import type { SessionUser } from '../../auth/permissions';

/** Studies where the user may upload (biologist member; admins: all), with samples and panel. */
export async function uploadOptions(db: Db, user: SessionUser) {
  const rows = user.role === 'admin'
    ? await db.select({ id: studies.id, name: studies.name }).from(studies).orderBy(asc(studies.name))
    : await db.select({ id: studies.id, name: studies.name }).from(studies)
      .innerJoin(studyMembers, and(eq(studyMembers.studyId, studies.id), eq(studyMembers.userId, user.id), eq(studyMembers.role, 'biologist')))
      .orderBy(asc(studies.name));
  if (!rows.length) return [];
  const ids = rows.map((r) => r.id);
  const [ss, panel] = await Promise.all([
    db.select({ id: samples.id, code: samples.code, studyId: samples.studyId }).from(samples).where(inArray(samples.studyId, ids)).orderBy(asc(samples.code)),
    db.select({ studyId: markerChannels.studyId, marker: markerChannels.marker, emissionNm: markerChannels.emissionNm, channelIndex: markerChannels.channelIndex })
      .from(markerChannels).where(inArray(markerChannels.studyId, ids)).orderBy(asc(markerChannels.channelIndex)),
  ]);
  return rows.map((r) => ({
    ...r,
    samples: ss.filter((s) => s.studyId === r.id).map(({ id, code }) => ({ id, code })),
    panel: panel.filter((p) => p.studyId === r.id).map(({ marker, emissionNm }) => ({ marker, emissionNm })),
  }));
}
