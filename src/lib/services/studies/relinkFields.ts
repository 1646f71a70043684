import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { fields, samples } from '../../db/schema';
import { conflict, HttpError } from '../../http/errors';
import { queueLinking } from '../../jobs/enqueue';

/**
 * Queues linking again, with the study's current positivity settings, of those of the given fields that are linked;
 * the others are skipped with a reason (an approved field must be sent back first).
 * @throws HttpError 404 `not_found` when a field is not in the study, 409 `conflict` when none can be linked again
 */
export async function relinkFields(db: Db, studyId: string, fieldIds: string[]) {
  const ids = [...new Set(fieldIds)];
  const rows = await db.select({ id: fields.id, name: fields.name, status: fields.status }).from(fields)
    .innerJoin(samples, eq(samples.id, fields.sampleId)).where(and(eq(samples.studyId, studyId), inArray(fields.id, ids)));
  if (rows.length !== ids.length) throw new HttpError(404, 'not_found', `${ids.length - rows.length} of the fields were not found in this study.`);
  const queued: string[] = [];
  const skipped: { id: string; name: string; reason: string }[] = [];
  for (const f of rows) {
    if (f.status === 'linked') queued.push(f.id);
    else skipped.push({ id: f.id, name: f.name, reason: f.status === 'approved' ? 'approved: send it back before linking again' : `not linked (status ${f.status})` });
  }
  if (!queued.length) throw conflict(`None of the fields can be linked again: ${skipped.map((s) => `${s.name} is ${s.reason}`).join('; ')}.`);
  await queueLinking(db, queued);
  return { queued, skipped };
}
