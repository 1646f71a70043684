import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { parseQuery } from '../../../lib/http/parse';
import { requireUser } from '../../../lib/auth/session';
import { requireScopeAction } from '../../../lib/auth/scopeAccess';
import { VesicleQuery } from '../../../lib/schemas/vesicles';
import { appDb } from '../../../lib/services/appDb';
import { exportVesiclesCsv } from '../../../lib/services/vesicles/exportVesiclesCsv';

/**
 * Per-vesicle CSV of a field or a sample, streamed page by page (keyset on id) so a sample of any
 * size never sits whole in memory. The one per-vesicle column set (docs/vesicle-columns.md: cap sizes, footprint, and
 * per marker amplitude, SE, z, q and the call), plus field, sample and transform.
 */
export const GET = handle(async (ctx) => {
  requireUser(ctx.locals);
  const q = parseQuery(ctx.url, VesicleQuery);
  const db = await appDb();
  const scope = await requireScopeAction(db, ctx.locals, q, 'study.read', 'export vesicle tables');
  const { stream, fileName } = await exportVesiclesCsv(db, scope, q);
  return new Response(stream, { headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${fileName}"`, 'cache-control': 'no-store' } });
}) satisfies APIRoute;
