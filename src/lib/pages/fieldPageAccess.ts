import { getDb } from '../db/client';
import { requireFieldAction } from '../auth/fieldAccess';
import { HttpError } from '../http/errors';
import { canInStudy } from '../auth/permissions';

/**
 * The guard of the field pages: the field and the caller's rights, or a plain-text error Response
 * (404 for a malformed id or a missing field, 403 for a non-member).
 */
export async function fieldPageAccess(params: Record<string, string | undefined>, locals: App.Locals) {
  const db = await getDb();
  const id = params.id ?? '';
  if (!/^[0-9a-f-]{36}$/i.test(id)) return new Response('Not found', { status: 404 });
  try {
    const a = await requireFieldAction(db, locals, id, 'study.read', 'open this field');
    const user = locals.user!;
    return {
      db, id, user, field: a.field, sampleCode: a.sampleCode, studyId: a.studyId, membership: a.membership,
      canAnalyse: canInStudy(user, a.membership, 'field.analyse'),
      canUpload: canInStudy(user, a.membership, 'sample.write'),
    };
  } catch (e) {
    if (e instanceof HttpError) return new Response(e.message, { status: e.status });
    throw e;
  }
}
