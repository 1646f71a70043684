import { and, eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { linkRuns } from '../../db/schema';
import { listBeads } from '../../db/queries/linkRunDetails';
import { HttpError } from '../../http/errors';
import { writeCsv, csvFixed, RESEARCH_USE_COMMENT } from '../../csv';

/** Column names of the bead export (units in the names). */
const BEAD_CSV_COLUMNS = ['bead', 'x_afm_px', 'y_afm_px', 'x_fl_px', 'y_fl_px', 'height_nm', 'footprint_diameter_nm', 'reason', 'under_fiducial_pick', 'field_id'] as const;

/**
 * The beads of a field's current linking as CSV text, apart from its vesicles (they are never vesicles): position in
 * both images, height, footprint and why each is a bead.
 * @throws HttpError 409 `not_linked` for a field without a current linking
 */
export async function exportBeadsCsv(db: Db, fieldId: string): Promise<string> {
  const [run] = await db.select({ id: linkRuns.id }).from(linkRuns).where(and(eq(linkRuns.fieldId, fieldId), eq(linkRuns.current, true)));
  if (!run) throw new HttpError(409, 'not_linked', 'This field has no current linking: link it to list its beads.');
  const rows = (await listBeads(db, run.id)).map((b) => [
    b.index + 1, csvFixed(b.xAfmPx, 2), csvFixed(b.yAfmPx, 2), b.xFlPx == null ? null : csvFixed(b.xFlPx, 2), b.yFlPx == null ? null : csvFixed(b.yFlPx, 2),
    csvFixed(b.heightNm, 1), csvFixed(b.footprintDiameterNm, 1), b.reason, b.underFiducialPick, fieldId,
  ]);
  return writeCsv({ comments: [RESEARCH_USE_COMMENT, 'Fiducial beads: not vesicles, never counted with them.'], header: [...BEAD_CSV_COLUMNS], rows, lineEnding: '\n' });
}
