/**
 * Saves a new registration version with optimistic concurrency: the save names the version it
 * started from; if anyone saved in between, it gets 409 and nothing is written (the analyst's pairs
 * stay in their browser). The unique (field, version) index settles two saves racing each other.
 */
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fields, registrations } from '../db/schema';
import { evaluateRegistration } from '../analysis/geometry';
import { HttpError } from '../http/errors';
import type { RegistrationSaveRequest } from '../schemas/registration';
import { listRegistrations } from '../db/queries/registrations';

const isUniqueViolation = (e: unknown) =>
  (e as { code?: string }).code === '23505' || (e as { cause?: { code?: string } }).cause?.code === '23505';

export async function saveRegistration(
  db: Db,
  field: { id: string; afmPixelNm: number | null; flPixelNm: number | null; status: string },
  userId: string,
  body: RegistrationSaveRequest,
) {
  if (!['ready', 'registered', 'linked'].includes(field.status)) {
    throw new HttpError(409, 'conflict', field.status === 'approved' ? 'This field is approved; send it back before changing its registration.' : 'The field is not processed yet.');
  }
  const evaluation = evaluateRegistration(body.pairs, { afmPixelNm: field.afmPixelNm ?? 1, flPixelNm: field.flPixelNm ?? 1, model: body.model });
  const [latest] = await listRegistrations(db, field.id);
  const current = latest?.version ?? 0;
  const stale = (who = latest?.createdByName ?? 'Someone', version = current) =>
    new HttpError(409, 'stale_version', `${who} saved version ${version} while you worked from version ${body.basedOnVersion}. Your pairs are still on your screen; reload to see the newer registration, then decide and save again.`);
  if (current !== body.basedOnVersion) throw stale();
  try {
    const row = await db.transaction(async (tx) => {
      const [inserted] = await tx.insert(registrations).values({
        fieldId: field.id, version: current + 1, model: body.model, pairs: body.pairs, flFromAfm: [...evaluation.flFromAfm],
        freNm: evaluation.freNm, treNm: evaluation.leaveOneOutTreRmsNm, createdBy: userId,
      }).returning();
      // A new transform makes earlier linking stale: the field goes back to "registered".
      await tx.update(fields).set({ status: 'registered', version: sql`${fields.version} + 1`, updatedAt: sql`now()` })
        .where(and(eq(fields.id, field.id), inArray(fields.status, ['ready', 'registered', 'linked'])));
      return inserted;
    });
    return { registration: row, evaluation };
  } catch (e) {
    if (isUniqueViolation(e)) throw stale('Another analyst', current + 1);
    throw e;
  }
}
