import type { Db } from '../../db/client';
import { getPanel } from '../../db/queries/sampleSelection';
import { pageVesicles } from '../../db/queries/vesicleExport';
import { vesicleRecordFromRow } from '../../db/queries/vesicleRecord';
import { safeFileName } from '../../reporting/csv';
import { vesicleCsvColumns, vesicleCsvCells } from '../../analysis/pipeline';
import { writeCsv, RESEARCH_USE_COMMENT } from '../../csv';
import type { ResultsSelection } from '../../reporting/access';

/**
 * Per-vesicle CSV of a sample's release (collaborators) or current analysis (lab), streamed page by page (keyset
 * pagination), so any size holds one page in memory. The one per-vesicle column set (docs/vesicle-columns.md: cap
 * sizes, footprint, per marker amplitude, SE, z, q and the call), then sample code, field and link run.
 * @returns the stream and a file name safe for a content-disposition header
 */
export async function exportSampleVesiclesCsv(db: Db, sel: ResultsSelection) {
  const markers = (await getPanel(db, sel.sample.studyId)).map((c) => c.marker);
  const pages = pageVesicles(db, sel.linkRunIds);
  const encoder = new TextEncoder();
  const stream = new ReadableStream<Uint8Array>({
    start(controller) {
      // header names (lab-chosen marker names) and cells go through the formula-escaping writer
      controller.enqueue(encoder.encode(writeCsv({ comments: [RESEARCH_USE_COMMENT], header: vesicleCsvColumns(markers, ['sample_code', 'field_id', 'link_run_id']) })));
    },
    async pull(controller) {
      try {
        const next = await pages.next();
        if (next.done) return controller.close();
        const rows = next.value.map((v) => vesicleCsvCells(vesicleRecordFromRow(v, markers), markers, [sel.sample.code, v.fieldId, v.linkRunId]));
        controller.enqueue(encoder.encode(writeCsv({ rows })));
      } catch (err) {
        console.error('[vesicles.csv] stream failed:', err);
        controller.error(err);
      }
    },
    async cancel() {
      await pages.return(undefined);
    },
  });
  const fileName = safeFileName(`${sel.sample.code}_${sel.release ? `release-v${sel.release.version}` : 'preview'}_vesicles.csv`);
  return { stream, fileName };
}
