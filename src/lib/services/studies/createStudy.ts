import type { z } from 'zod';
import type { Db } from '../../db/client';
import { studies } from '../../db/schema';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { StudyCreateRequest } from '../../schemas/people';
import { identifyingWarnings } from '../../reporting/identifyingWarnings';

/**
 * Creates a study (admins; members are added afterwards). `warnings` name any text that looks like it identifies
 * a person; the study is created all the same.
 */
export async function createStudy(db: Db, by: Actor, study: z.infer<typeof StudyCreateRequest>) {
  const [row] = await db.insert(studies).values({ ...study, createdBy: by.id }).returning({ id: studies.id });
  await audit(db, { action: 'study.created', actorId: by.id, actorEmail: by.email, targetType: 'study', targetId: row.id, ip: by.ip, details: { name: study.name } });
  const warnings = identifyingWarnings([{ what: 'The study name', value: study.name }, { what: 'The description', value: study.description }]);
  return { id: row.id, warnings };
}
