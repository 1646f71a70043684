import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { getPanel } from '../../../../lib/db/queries/sampleSelection';
import { pageVesicles } from '../../../../lib/db/queries/vesicleExport';
import { sampleSelectionFor } from '../../../../lib/reporting/routeSelection';
import { sampleVesicleCsvHeader, sampleVesicleCsvRow } from '../../../../lib/reporting/exports';
import { safeFileName } from '../../../../lib/reporting/csv';

/** Per-vesicle CSV, streamed page by page (keyset pagination), so any size holds one page in memory. */
export const GET = handle(async (ctx) => {
  const { db, sel } = await sampleSelectionFor(ctx);
  const panel = await getPanel(db, sel.sample.studyId);
  const channels = panel.map((c) => c.channelIndex);
  const pages = pageVesicles(db, sel.linkRunIds);
  const encoder = new TextEncoder();
  const stream = new ReadableStream<Uint8Array>({
    start(controller) {
      controller.enqueue(encoder.encode(sampleVesicleCsvHeader(panel.map((c) => c.marker))));
    },
    async pull(controller) {
      try {
        const next = await pages.next();
        if (next.done) return controller.close();
        controller.enqueue(encoder.encode(next.value.map((v) => sampleVesicleCsvRow(sel.sample.code, v, channels)).join('')));
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
