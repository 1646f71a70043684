import type { Db } from '../db/client';
import { getFieldWithStudy } from '../db/queries/fields';
import { notFound } from '../http/errors';
import { requireStudyAction } from './session';
import type { Action } from './permissions';

/** Loads a field and checks the caller may do `action` in its study (401/403/404 otherwise). */
export async function requireFieldAction(db: Db, locals: App.Locals, fieldId: string, action: Action, what?: string) {
  const row = await getFieldWithStudy(db, fieldId);
  if (!row) {
    if (!locals.user) throw (await import('../http/errors')).unauthorized();
    throw notFound('That field');
  }
  const access = await requireStudyAction(db, locals, row.studyId, action, what);
  return { ...access, field: row.field, studyId: row.studyId, sampleCode: row.sampleCode };
}
