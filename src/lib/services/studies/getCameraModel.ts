import { eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { studies } from '../../db/schema';
import { notFound } from '../../http/errors';
import type { CameraModelSetting } from '../../schemas/cameraModel';

/**
 * The study's camera noise model; null when not set (linking then estimates it from each frame).
 * @throws HttpError 404 `not_found` for an unknown study
 */
export async function getCameraModel(db: Db, studyId: string): Promise<CameraModelSetting | null> {
  const [s] = await db.select({ o: studies.cameraOffsetCounts, g: studies.cameraGainCountsPerPhoton, r: studies.cameraReadNoiseCounts }).from(studies).where(eq(studies.id, studyId));
  if (!s) throw notFound('That study');
  return s.o == null || s.g == null || s.r == null ? null : { offsetCounts: s.o, gainCountsPerPhoton: s.g, readNoiseCounts: s.r };
}
