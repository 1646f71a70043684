import { eq, asc, max, inArray } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { samples, fields, releases } from '../../db/schema';
import { getStudy, listMembers, listPanel } from '../../db/queries/studies';
import { getPositivity } from './getPositivity';

/**
 * What the study page shows: the study, members and panel for everyone who may read its results; for lab members
 * (`seesLab`) also each sample with its fields (by code, fields oldest first), the latest release version per sample,
 * and the positivity settings when the study has a panel.
 */
export async function loadStudyPage(db: Db, studyId: string, seesLab: boolean) {
  const study = (await getStudy(db, studyId))!;
  const [members, panel] = await Promise.all([listMembers(db, studyId), listPanel(db, studyId)]);
  const rows = seesLab
    ? await db.select({ sample: samples, field: fields }).from(samples).leftJoin(fields, eq(fields.sampleId, samples.id))
      .where(eq(samples.studyId, studyId)).orderBy(asc(samples.code), asc(fields.createdAt))
    : [];
  const bySample = new Map<string, { sample: (typeof rows)[number]['sample']; fields: NonNullable<(typeof rows)[number]['field']>[] }>();
  for (const r of rows) {
    const entry = bySample.get(r.sample.id) ?? { sample: r.sample, fields: [] };
    if (r.field) entry.fields.push(r.field);
    bySample.set(r.sample.id, entry);
  }
  const sampleIds = [...bySample.keys()];
  const latestRelease = new Map(sampleIds.length
    ? (await db.select({ id: releases.sampleId, v: max(releases.version) }).from(releases).where(inArray(releases.sampleId, sampleIds)).groupBy(releases.sampleId)).map((r) => [r.id, r.v ?? 0])
    : []);
  const positivity = seesLab && panel.length > 0 ? await getPositivity(db, studyId) : null;
  return { study, members, panel, samples: [...bySample.values()], latestRelease, positivity };
}
