import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { appDb } from '../../../../lib/services/appDb';
import { exportBeadsCsv } from '../../../../lib/services/fields/exportBeadsCsv';

/**
 * The beads of a field's current linking, apart from its vesicles (they are never vesicles): position in both images,
 * height, footprint and why each is a bead. Lab members only, like the vesicle export of a field.
 */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  await requireFieldAction(db, ctx.locals, id, 'study.read', 'export this field\'s beads');
  return new Response(await exportBeadsCsv(db, id), {
    headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="beads-${id}.csv"`, 'cache-control': 'no-store' },
  });
}) satisfies APIRoute;
