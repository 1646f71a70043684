import type { Db } from '../../db/client';
import type { fields } from '../../db/schema';
import { getFieldDetail } from '../../db/queries/fields';

/**
 * A field with its files (object keys left out), tile layers, status, job progress and latest registration, as the
 * field API answers it (the progress bar polls it).
 */
export async function getField(db: Db, field: typeof fields.$inferSelect, sampleCode: string) {
  const detail = await getFieldDetail(db, field.id);
  return {
    field: { ...field, sampleCode },
    files: detail.files.map(({ objectKey: _k, ...f }) => f),
    layers: detail.tiles.map((t) => ({ layer: t.layer, widthPx: t.widthPx, heightPx: t.heightPx, display: t.display })),
    registration: detail.registration,
  };
}
