import type { z } from 'zod';
import type { Db } from '../../db/client';
import { samples } from '../../db/schema';
import { conflict } from '../../http/errors';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { SampleCreateRequest } from '../../schemas/fields';
import { identifyingWarnings } from '../../reporting/identifyingWarnings';

/**
 * Records a de-identified sample. `warnings` carry the sample form's messages when the code or any free text looks
 * like it holds a name, initials, a record number or a full date; the sample is recorded all the same (the check is
 * a heuristic, and the form has already asked for confirmation).
 * @throws HttpError 409 `conflict` when the study already has a sample with that code
 */
export async function createSample(db: Db, by: Actor, studyId: string, sample: z.infer<typeof SampleCreateRequest>) {
  const [row] = await db.insert(samples).values({ ...sample, studyId }).onConflictDoNothing().returning({ id: samples.id });
  if (!row) throw conflict(`This study already has a sample coded ${sample.code}.`);
  await audit(db, { action: 'sample.created', actorId: by.id, actorEmail: by.email, targetType: 'sample', targetId: row.id, ip: by.ip, details: { code: sample.code } });
  const warnings = identifyingWarnings([
    { what: 'The code', value: sample.code, kind: 'code' }, { what: 'The group label', value: sample.groupLabel }, { what: 'The source', value: sample.source },
    { what: 'The isolation method', value: sample.isolationMethod }, { what: 'The substrate', value: sample.substrate }, { what: 'The notes', value: sample.notes },
  ]);
  return { id: row.id, warnings };
}
