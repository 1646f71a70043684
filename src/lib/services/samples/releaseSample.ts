import type { Db } from '../../db/client';
import { createRelease } from '../../db/queries/releases';
import { conflict } from '../../http/errors';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';

/**
 * Releases the sample's current analysis to the study's collaborators as a new version (`createRelease`: every field
 * approved and linked; of two simultaneous releases the second is refused) and audits it.
 * @param expectedVersion - the latest release version the person saw (0 for none); undefined to skip the check
 * @throws HttpError 409 `conflict` saying what is missing (fields, approvals, linkings) or that someone released first
 */
export async function releaseSample(db: Db, by: Actor, sample: { id: string; code: string }, expectedVersion: number | undefined) {
  const out = await createRelease(db, sample.id, by.id, expectedVersion);
  if (!out.ok) {
    switch (out.reason) {
      case 'no_fields': throw conflict(`Sample ${sample.code} has no fields yet; upload and analyse fields before releasing.`);
      case 'not_approved': {
        const listed = out.notApprovedFields.slice(0, 5).map((f) => `${f.name} (${f.status})`).join(', ');
        const more = out.notApprovedFields.length > 5 ? ` and ${out.notApprovedFields.length - 5} more` : '';
        throw conflict(`${out.notApproved} of ${out.total} field(s) of sample ${sample.code} are not approved yet: ${listed}${more}. `
          + 'Approve every field before releasing; a field that failed or is not worth analysing can be removed with "Remove field" on its field page.');
      }
      case 'no_link_runs': throw conflict(`${out.fieldsWithout} field(s) of sample ${sample.code} have no current linking; link them again before releasing.`);
      case 'version_taken': throw conflict(`Someone else released sample ${sample.code} in the meantime. Reload to see the new version; release again only if the data changed.`);
    }
  }
  await audit(db, {
    action: 'sample.released', actorId: by.id, actorEmail: by.email, targetType: 'sample', targetId: sample.id, ip: by.ip,
    details: { version: out.release.version, linkRunIds: out.release.linkRunIds, sampleCode: sample.code },
  });
  return out.release;
}
