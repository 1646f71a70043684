import { getStorage } from '../../storage/client';
import { getBytes } from '../../storage/objects';
import { detectionKey } from '../../storage/keys';
import { proposePairs } from '../../registration/proposePairs';
import { HttpError } from '../../http/errors';
import type { FieldDetection } from '../../jobs/detectionTypes';
import type { z } from 'zod';
import type { AutoPairRequest } from '../../schemas/registration';

/**
 * Proposes fiducial pairs without clicks, over the field's stored detection (RANSAC of the chosen model over
 * detected beads/vesicles and spots); nothing is saved.
 * @throws HttpError 409 `not_ready` for a field not processed yet
 */
export async function proposeFieldPairs(
  field: { id: string; status: string; afmPixelNm: number | null; flPixelNm: number | null },
  request: z.infer<typeof AutoPairRequest>,
) {
  if (!['ready', 'registered', 'linked'].includes(field.status)) throw new HttpError(409, 'not_ready', 'The field has not been processed yet.');
  const detection = JSON.parse(new TextDecoder().decode(await getBytes(await getStorage(), detectionKey(field.id)))) as FieldDetection;
  return proposePairs(detection, { afmPixelNm: field.afmPixelNm ?? 1, flPixelNm: field.flPixelNm ?? 1, inlierTolerancePx: request.inlierTolerancePx, model: request.model });
}
