import { and, asc, eq, inArray } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { fields, samples, studies, studyMembers } from '../../db/schema';
import type { SessionUser } from '../../auth/permissions';

/** The statuses the analysis queue lists: fields waiting for an analyst, being processed, or failed. */
const QUEUED = ['ready', 'registered', 'linked', 'failed', 'ingesting'] as const;

/**
 * The fields waiting for analysis, oldest change first: every study's for an admin, else those of the studies where
 * `user` is an analyst member.
 */
export async function listAnalysisQueue(db: Db, user: SessionUser) {
  const q = db.select({ id: fields.id, name: fields.name, status: fields.status, reason: fields.failureReason, code: samples.code, study: studies.name, updatedAt: fields.updatedAt })
    .from(fields).innerJoin(samples, eq(samples.id, fields.sampleId)).innerJoin(studies, eq(studies.id, samples.studyId));
  return user.role === 'admin'
    ? q.where(inArray(fields.status, [...QUEUED])).orderBy(asc(fields.updatedAt))
    : q.innerJoin(studyMembers, and(eq(studyMembers.studyId, studies.id), eq(studyMembers.userId, user.id), eq(studyMembers.role, 'analyst')))
      .where(inArray(fields.status, [...QUEUED])).orderBy(asc(fields.updatedAt));
}
