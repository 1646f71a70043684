import { asc, eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { samples } from '../../db/schema';

/** The study's samples, by code. */
export async function listSamples(db: Db, studyId: string) {
  return db.select().from(samples).where(eq(samples.studyId, studyId)).orderBy(asc(samples.code));
}
