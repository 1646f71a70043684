import type { Db } from '../../db/client';
import { removeField } from '../../db/queries/fieldRemoval';
import { getStorage } from '../../storage/client';
import { deleteObject, deletePrefix } from '../../storage/objects';
import { fieldPrefix } from '../../storage/keys';
import { conflict, notFound } from '../../http/errors';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';

/**
 * Removes a field that is neither approved, being processed, nor in any release: its rows go by cascade in one
 * transaction (`removeField`), then its objects in storage. A storage failure leaves orphans (reported as
 * `objectsRemoved: false`) but does not undo the removal.
 * @throws HttpError 404 `not_found`, or 409 `conflict` with the reason the field must stay
 */
export async function deleteField(db: Db, by: Actor, fieldId: string, sampleCode: string, expectedVersion: number) {
  const out = await removeField(db, fieldId, expectedVersion);
  if (!out.ok) {
    switch (out.reason) {
      case 'not_found': throw notFound('That field');
      case 'approved': throw conflict(`Field ${out.name} is approved, so it cannot be removed. Send it back first (on its field page) if it should not count.`);
      case 'processing': throw conflict(`Field ${out.name} is being processed. Wait until processing finishes or fails, then remove it.`);
      case 'released': throw conflict(`Field ${out.name} is part of released results of sample ${sampleCode} (version ${out.releaseVersions.join(', ')}), so it cannot be removed: collaborators rely on those numbers.`);
      case 'stale': throw conflict(`Field ${out.name} changed since you opened it. Reload the page to see its current state, then decide again.`);
    }
  }
  let objectsRemoved = true;
  try {
    const st = await getStorage();
    const prefix = fieldPrefix(fieldId);
    await deletePrefix(st, prefix);
    for (const key of out.objectKeys.filter((k) => !k.startsWith(prefix))) await deleteObject(st, key);
  } catch (err) {
    objectsRemoved = false;
    console.error('[fields] removed field', fieldId, 'but not all its objects:', (err as Error).message);
  }
  await audit(db, {
    action: 'field.removed', actorId: by.id, actorEmail: by.email, targetType: 'field', targetId: fieldId, ip: by.ip,
    details: { name: out.field.name, status: out.field.status, sampleId: out.field.sampleId, sampleCode, objectsRemoved },
  });
  return { removed: true, fieldId, name: out.field.name, objectsRemoved };
}
