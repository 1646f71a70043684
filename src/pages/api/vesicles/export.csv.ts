import type { APIRoute } from 'astro';
import { asc, eq } from 'drizzle-orm';
import { handle } from '../../../lib/http/respond';
import { parseQuery } from '../../../lib/http/parse';
import { requireUser } from '../../../lib/auth/session';
import { requireScopeAction } from '../../../lib/auth/scopeAccess';
import { getDb } from '../../../lib/db/client';
import { vesicles, linkRuns, registrations } from '../../../lib/db/schema';
import { vesicleFilter } from '../../../lib/db/queries/vesicles';
import { listPanel } from '../../../lib/db/queries/studies';
import { vesicleCsvColumns, vesicleCsvCells } from '../../../lib/analysis/pipeline';
import { writeCsv, RESEARCH_USE_COMMENT } from '../../../lib/csv';
import { VesicleQuery } from '../../../lib/schemas/vesicles';
import { vesicleRecordFromRow } from '../../../lib/db/queries/vesicleRecord';

const PAGE = 2000;

/**
 * Per-vesicle CSV of a field or a sample, streamed page by page (keyset on id) so a sample of any
 * size never sits whole in memory. The one per-vesicle column set (docs/vesicle-columns.md: cap sizes, footprint, and
 * per marker amplitude, SE, z, q and the call), plus field, sample and transform.
 */
export const GET = handle(async (ctx) => {
  requireUser(ctx.locals);
  const q = parseQuery(ctx.url, VesicleQuery);
  const db = await getDb();
  const { studyId, sampleCode } = await requireScopeAction(db, ctx.locals, q, 'study.read', 'export vesicle tables');
  const markers = (await listPanel(db, studyId)).map((p) => p.marker);
  const where = vesicleFilter(q);
  const enc = new TextEncoder();
  let lastId = 0;
  const stream = new ReadableStream<Uint8Array>({
    start(c) {
      // every header name (marker names are lab-chosen text) and cell goes through the formula-escaping writer
      c.enqueue(enc.encode(writeCsv({ comments: [RESEARCH_USE_COMMENT], header: vesicleCsvColumns(markers, ['field_id', 'sample_code', 'transform_version']), lineEnding: '\n' })));
    },
    async pull(c) {
      const { gt, and } = await import('drizzle-orm');
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
      const text = writeCsv({ lineEnding: '\n', rows: rows.map(({ v, regVersion }) => vesicleCsvCells(vesicleRecordFromRow(v, markers), markers, [v.fieldId, sampleCode, String(regVersion ?? '')])) });
      c.enqueue(enc.encode(text));
    },
  });
  const name = `vesicles-${sampleCode}${q.fieldId ? '-field' : ''}.csv`.replace(/[^A-Za-z0-9._-]/g, '_');
  return new Response(stream, { headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"`, 'cache-control': 'no-store' } });
}) satisfies APIRoute;
