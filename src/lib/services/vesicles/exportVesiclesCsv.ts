import { and, asc, eq, gt } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { vesicles, linkRuns, registrations } from '../../db/schema';
import { vesicleFilter } from '../../db/queries/vesicles';
import { listPanel } from '../../db/queries/studies';
import { vesicleRecordFromRow } from '../../db/queries/vesicleRecord';
import { vesicleCsvColumns, vesicleCsvCells } from '../../analysis/pipeline';
import { writeCsv, RESEARCH_USE_COMMENT } from '../../csv';
import type { VesicleQuery } from '../../schemas/vesicles';

/** Rows per query of the keyset paging. */
const PAGE = 2000;

/**
 * Per-vesicle CSV of a field or a sample (current linking), streamed page by page (keyset on id) so a sample of any
 * size never sits whole in memory. The one per-vesicle column set (docs/vesicle-columns.md: cap sizes, footprint,
 * and per marker amplitude, SE, z, q and the call), plus field, sample and transform version.
 * @returns the stream and a file name safe for a content-disposition header
 */
export async function exportVesiclesCsv(db: Db, scope: { studyId: string; sampleCode: string }, q: VesicleQuery) {
  const markers = (await listPanel(db, scope.studyId)).map((p) => p.marker);
  const where = vesicleFilter(q);
  const enc = new TextEncoder();
  let lastId = 0;
  const stream = new ReadableStream<Uint8Array>({
    start(c) {
      // every header name (marker names are lab-chosen text) and cell goes through the formula-escaping writer
      c.enqueue(enc.encode(writeCsv({ comments: [RESEARCH_USE_COMMENT], header: vesicleCsvColumns(markers, ['field_id', 'sample_code', 'transform_version']), lineEnding: '\n' })));
    },
    async pull(c) {
      const rows = await db
        .select({ v: vesicles, regVersion: registrations.version })
        .from(vesicles)
        .innerJoin(linkRuns, eq(linkRuns.id, vesicles.linkRunId))
        .leftJoin(registrations, eq(registrations.id, linkRuns.registrationId))
        .where(and(where, gt(vesicles.id, lastId)))
        .orderBy(asc(vesicles.id))
        .limit(PAGE);
      if (!rows.length) return c.close();
      lastId = rows[rows.length - 1].v.id;
      const text = writeCsv({ lineEnding: '\n', rows: rows.map(({ v, regVersion }) => vesicleCsvCells(vesicleRecordFromRow(v, markers), markers, [v.fieldId, scope.sampleCode, String(regVersion ?? '')])) });
      c.enqueue(enc.encode(text));
    },
  });
  const fileName = `vesicles-${scope.sampleCode}${q.fieldId ? '-field' : ''}.csv`.replace(/[^A-Za-z0-9._-]/g, '_');
  return { stream, fileName };
}
