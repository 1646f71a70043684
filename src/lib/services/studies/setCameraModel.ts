import { eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { studies } from '../../db/schema';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { CameraModelSetting } from '../../schemas/cameraModel';
import { getCameraModel } from './getCameraModel';

/**
 * Sets the camera noise model linking uses (offset, gain and read noise together), or null to estimate them from
 * each frame; a change is audited. Fields already linked keep their results until they are linked again.
 * @returns the model as stored
 * @throws HttpError 404 `not_found` for an unknown study
 */
export async function setCameraModel(db: Db, by: Actor, studyId: string, camera: CameraModelSetting | null): Promise<CameraModelSetting | null> {
  const before = await getCameraModel(db, studyId);
  await db.update(studies).set({
    cameraOffsetCounts: camera?.offsetCounts ?? null, cameraGainCountsPerPhoton: camera?.gainCountsPerPhoton ?? null, cameraReadNoiseCounts: camera?.readNoiseCounts ?? null,
  }).where(eq(studies.id, studyId));
  if (JSON.stringify(before) !== JSON.stringify(camera)) {
    await audit(db, { action: 'panel.changed', actorId: by.id, actorEmail: by.email, targetType: 'study', targetId: studyId, ip: by.ip, details: { camera: { from: before, to: camera } } });
  }
  return getCameraModel(db, studyId);
}
