import { eq, asc, desc } from 'drizzle-orm';
import type { Db } from '../client';
import { fields, fieldFiles, tileSets, samples, registrations } from '../schema';

/** A field with its sample's study id, or null. */
export async function getFieldWithStudy(db: Db, fieldId: string) {
  const [row] = await db
    .select({ field: fields, studyId: samples.studyId, sampleCode: samples.code })
    .from(fields)
    .innerJoin(samples, eq(samples.id, fields.sampleId))
    .where(eq(fields.id, fieldId));
  return row ?? null;
}

export async function getFieldDetail(db: Db, fieldId: string) {
  const [files, tiles, regs] = await Promise.all([
    db.select().from(fieldFiles).where(eq(fieldFiles.fieldId, fieldId)).orderBy(asc(fieldFiles.kind), asc(fieldFiles.channelIndex)),
    db.select().from(tileSets).where(eq(tileSets.fieldId, fieldId)).orderBy(asc(tileSets.layer)),
    db.select().from(registrations).where(eq(registrations.fieldId, fieldId)).orderBy(desc(registrations.version)).limit(1),
  ]);
  return { files, tiles, registration: regs[0] ?? null };
}

export async function listFieldsOfSample(db: Db, sampleId: string) {
  return db.select().from(fields).where(eq(fields.sampleId, sampleId)).orderBy(asc(fields.createdAt));
}
