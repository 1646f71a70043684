import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { sampleSelectionFor } from '../../../../lib/reporting/routeSelection';
import { exportSampleVesiclesCsv } from '../../../../lib/services/vesicles/exportSampleVesiclesCsv';

/**
 * Per-vesicle CSV of a sample's release (collaborators) or current analysis (lab), streamed page by page (keyset
 * pagination), so any size holds one page in memory. The one per-vesicle column set (docs/vesicle-columns.md: cap
 * sizes, footprint, per marker amplitude, SE, z, q and the call), then sample code, field and link run.
 */
export const GET = handle(async (ctx) => {
  const { db, sel } = await sampleSelectionFor(ctx);
  const { stream, fileName } = await exportSampleVesiclesCsv(db, sel);
  return new Response(stream, {
    headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${fileName}"`, 'cache-control': 'private, no-store' },
  });
}) satisfies APIRoute;
