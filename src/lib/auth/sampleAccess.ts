import type { Db } from '../db/client';
import { getSampleContext } from '../db/queries/sampleSelection';
import { notFound } from '../http/errors';
import { requireStudyAction } from './session';
import type { Action } from './permissions';

/**
 * Loads a sample and checks the caller may do `action` in its study: 404 for a missing sample, then 401/403/404 as
 * {@link requireStudyAction} decides. The caller checks that someone is signed in first.
 */
export async function requireSampleAction(db: Db, locals: App.Locals, sampleId: string, action: Action, what?: string) {
  const sample = await getSampleContext(db, sampleId);
  if (!sample) throw notFound('That sample');
  const access = await requireStudyAction(db, locals, sample.studyId, action, what);
  return { ...access, sample };
}
