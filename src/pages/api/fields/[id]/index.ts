import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { getDb } from '../../../../lib/db/client';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { getFieldDetail } from '../../../../lib/db/queries/fields';

/** A field with its files, tile layers, status and job progress (polled by the progress bar). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { field, sampleCode } = await requireFieldAction(db, ctx.locals, id, 'study.read', 'open this field');
  const detail = await getFieldDetail(db, id);
  return Response.json({
    field: { ...field, sampleCode },
    files: detail.files.map(({ objectKey: _k, ...f }) => f),
    layers: detail.tiles.map((t) => ({ layer: t.layer, widthPx: t.widthPx, heightPx: t.heightPx, display: t.display })),
    registration: detail.registration,
  });
}) satisfies APIRoute;
