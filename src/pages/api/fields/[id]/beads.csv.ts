import type { APIRoute } from 'astro';
import { and, eq } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { HttpError } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { linkRuns } from '../../../../lib/db/schema';
import { listBeads } from '../../../../lib/db/queries/linkRunDetails';
import { writeCsv, csvFixed, RESEARCH_USE_COMMENT } from '../../../../lib/csv';

/** Column names of the bead export (units in the names). */
const BEAD_CSV_COLUMNS = ['bead', 'x_afm_px', 'y_afm_px', 'x_fl_px', 'y_fl_px', 'height_nm', 'footprint_diameter_nm', 'reason', 'under_fiducial_pick', 'field_id'] as const;

/**
 * The beads of a field's current linking, apart from its vesicles (they are never vesicles): position in both images,
 * height, footprint and why each is a bead. Lab members only, like the vesicle export of a field.
 */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  await requireFieldAction(db, ctx.locals, id, 'study.read', 'export this field\'s beads');
  const [run] = await db.select({ id: linkRuns.id }).from(linkRuns).where(and(eq(linkRuns.fieldId, id), eq(linkRuns.current, true)));
  if (!run) throw new HttpError(409, 'not_linked', 'This field has no current linking: link it to list its beads.');
  const rows = (await listBeads(db, run.id)).map((b) => [
    b.index + 1, csvFixed(b.xAfmPx, 2), csvFixed(b.yAfmPx, 2), b.xFlPx == null ? null : csvFixed(b.xFlPx, 2), b.yFlPx == null ? null : csvFixed(b.yFlPx, 2),
    csvFixed(b.heightNm, 1), csvFixed(b.footprintDiameterNm, 1), b.reason, b.underFiducialPick, id,
  ]);
  const text = writeCsv({ comments: [RESEARCH_USE_COMMENT, 'Fiducial beads: not vesicles, never counted with them.'], header: [...BEAD_CSV_COLUMNS], rows, lineEnding: '\n' });
  return new Response(text, {
    headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="beads-${id}.csv"`, 'cache-control': 'no-store' },
  });
}) satisfies APIRoute;
