/** Keyset paging through the vesicle rows of released or current link runs, for the per-vesicle export. */
import type { Db } from '../client';
import { rows } from './rows';

/** One vesicle row of the per-vesicle export. */
export interface VesicleExportRow {
  id: number;
  fieldId: string;
  linkRunId: string;
  index: number;
  heightNm: number;
  diameterNm: number;
  volumeNm3: number;
  areaNm2: number;
  markerBits: number;
  intensities: (number | null)[];
}

/**
 * Pages through the vesicle rows of `linkRunIds` by keyset (link run, then id), `pageSize` rows per
 * query, so an export of any size holds one page in memory.
 */
export async function* pageVesicles(db: Db, linkRunIds: string[], pageSize = 5000): AsyncGenerator<VesicleExportRow[]> {
  for (const runId of [...linkRunIds].sort()) {
    let after = 0;
    for (;;) {
      const page = await rows<VesicleExportRow & { id: string }>(
        db,
        `select id, field_id as "fieldId", link_run_id as "linkRunId", index, height_nm as "heightNm", diameter_nm as "diameterNm",
                volume_nm3 as "volumeNm3", area_nm2 as "areaNm2", marker_bits as "markerBits",
                coalesce((select jsonb_agg(m->'intensity') from jsonb_array_elements(markers) m), '[]'::jsonb) as intensities
           from vesicles where link_run_id = $1 and id > $2 order by id limit $3`,
        [runId, after, pageSize],
      );
      if (page.length === 0) break;
      yield page.map((r) => ({ ...r, id: Number(r.id) }));
      after = Number(page[page.length - 1].id);
      if (page.length < pageSize) break;
    }
  }
}
