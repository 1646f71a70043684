import type { Db } from '../../db/client';
import { saveRegistration } from '../../registration/saveRegistration';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { RegistrationSaveRequest } from '../../schemas/registration';

/**
 * Saves a new registration version of the field (`saveRegistration`: fit, evaluation, version check in one
 * transaction) and audits it.
 * @returns the new version with its registration error (nm) and the evaluation's notes
 * @throws HttpError 409 `stale_version` when based on an older version; AnalysisError for degenerate pairs
 */
export async function recordRegistration(
  db: Db,
  by: Actor,
  field: { id: string; afmPixelNm: number | null; flPixelNm: number | null; status: string },
  body: RegistrationSaveRequest,
) {
  const { registration, evaluation } = await saveRegistration(db, field, by.id, body);
  await audit(db, { action: 'registration.saved', actorId: by.id, actorEmail: by.email, targetType: 'field', targetId: field.id, ip: by.ip, details: { version: registration.version, pairs: body.pairs.length, freNm: evaluation.freNm } });
  return { version: registration.version, freNm: evaluation.freNm, treNm: evaluation.leaveOneOutTreRmsNm, description: evaluation.description, warnings: evaluation.warnings };
}
