import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { samples } from '../db/schema';
import { notFound, unauthorized } from '../http/errors';
import { appAccessCache, requireStudyAction } from './session';
import { requireFieldAction } from './fieldAccess';
import type { Action } from './permissions';

/** Checks access to a field or a whole sample (whichever the query names) and returns its study. */
export async function requireScopeAction(db: Db, locals: App.Locals, scope: { fieldId?: string; sampleId?: string }, action: Action, what: string) {
  if (!locals.user) throw unauthorized();
  if (scope.fieldId) {
    const a = await requireFieldAction(db, locals, scope.fieldId, action, what);
    return { user: a.user, studyId: a.studyId, sampleCode: a.sampleCode };
  }
  const load = async () => {
    const [row] = await db.select({ studyId: samples.studyId, code: samples.code }).from(samples).where(eq(samples.id, scope.sampleId!));
    return row ?? null;
  };
  const cache = appAccessCache(db);
  const s = cache ? await cache.sample(scope.sampleId!, load) : await load();
  if (!s) throw notFound('That sample');
  const a = await requireStudyAction(db, locals, s.studyId, action, what);
  return { user: a.user, studyId: s.studyId, sampleCode: s.code };
}
