import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { getPanel } from '../../../../lib/db/queries/results';
import { pageVesicles } from '../../../../lib/db/queries/vesicleExport';
import { vesicleRecordFromRow } from '../../../../lib/db/queries/vesicleRecord';
import { sampleSelectionFor } from '../../../../lib/reporting/routeSelection';
import { safeFileName } from '../../../../lib/reporting/csv';
import { vesicleCsvColumns, vesicleCsvCells } from '../../../../lib/analysis/pipeline';
import { writeCsv, RESEARCH_USE_COMMENT } from '../../../../lib/csv';

/**
 * Per-vesicle CSV of a sample's release (collaborators) or current analysis (lab), streamed page by page (keyset
 * pagination), so any size holds one page in memory. The one per-vesicle column set (docs/vesicle-columns.md: cap
 * sizes, footprint, per marker amplitude, SE, z, q and the call), then sample code, field and link run.
 */
export const GET = handle(async (ctx) => {
  const { db, sel } = await sampleSelectionFor(ctx);
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
  const name = safeFileName(`${sel.sample.code}_${sel.release ? `release-v${sel.release.version}` : 'preview'}_vesicles.csv`);
  return new Response(stream, {
    headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"`, 'cache-control': 'private, no-store' },
  });
}) satisfies APIRoute;
