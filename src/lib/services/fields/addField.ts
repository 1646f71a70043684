import type { Db } from '../../db/client';
import { listPanel } from '../../db/queries/studies';
import { getStorage } from '../../storage/client';
import { createField } from '../../uploads/createField';
import { uploadLimits } from '../../uploads/limits';
import { enqueueIngest } from '../../jobs/enqueue';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { FieldCreateRequest } from '../../schemas/fields';
import { identifyingWarnings } from '../../reporting/identifyingWarnings';

/**
 * Confirms a field from inspected uploads (`createField` checks the files against the study's panel) and queues its
 * ingestion. The field name and file names reach collaborators' tables and exports: `warnings` say when they look
 * identifying.
 * @throws HttpError 400/422 as `createField` decides
 */
export async function addField(db: Db, by: Actor, sample: { studyId: string; code: string }, body: FieldCreateRequest) {
  const panel = await listPanel(db, sample.studyId);
  const field = await createField(db, await getStorage(), by.id, body, panel.length, uploadLimits());
  await enqueueIngest(field.id);
  await audit(db, { action: 'field.uploaded', actorId: by.id, actorEmail: by.email, targetType: 'field', targetId: field.id, ip: by.ip, details: { sample: sample.code, name: field.name } });
  const warnings = identifyingWarnings([
    { what: 'The field name', value: body.name },
    ...Object.values(body.fileNames).map((n) => ({ what: `The file name "${n}"`, value: n.replace(/\.(ome\.)?tiff?$/i, '') })),
  ]);
  return { id: field.id, status: field.status, warnings };
}
