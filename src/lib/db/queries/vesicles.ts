/** Server-side paging, sorting and filtering of the current vesicle rows of a field or a sample. */
import { and, eq, gte, lte, sql, type SQL } from 'drizzle-orm';
import type { Db } from '../client';
import { vesicles, linkRuns } from '../schema';
import type { VesicleQuery } from '../../schemas/vesicles';

export function vesicleFilter(q: VesicleQuery): SQL {
  const where: SQL[] = [q.fieldId ? eq(vesicles.fieldId, q.fieldId) : eq(vesicles.sampleId, q.sampleId!)];
  if (q.minHeightNm !== undefined) where.push(gte(vesicles.heightNm, q.minHeightNm));
  if (q.maxHeightNm !== undefined) where.push(lte(vesicles.heightNm, q.maxHeightNm));
  if (q.minDiameterNm !== undefined) where.push(gte(vesicles.diameterNm, q.minDiameterNm));
  if (q.maxDiameterNm !== undefined) where.push(lte(vesicles.diameterNm, q.maxDiameterNm));
  if (q.phenotype) where.push(eq(vesicles.phenotype, q.phenotype));
  // only the results of each field's current linking
  where.push(sql`${vesicles.linkRunId} in (select ${linkRuns.id} from ${linkRuns} where ${linkRuns.current})`);
  return and(...where)!;
}

/** Sort columns by query name; the only text of the request that reaches the SQL, and only through this map. */
const SORT_SQL = { index: 'index', heightNm: 'height_nm', diameterNm: 'diameter_nm', volumeNm3: 'volume_nm3', phenotype: 'phenotype' } as const;

/**
 * One page of the table, its total and the phenotype counts in a single round trip (three subqueries, each
 * free to use the (sample|field, column) indexes). Written as SQL text rather than through Drizzle's builder:
 * on the busiest route, building the queries cost more than PostgreSQL took to answer them (docs/benchmarks.md, "Load").
 */
export async function pageVesicles(db: Db, q: VesicleQuery) {
  const params: unknown[] = [q.fieldId ?? q.sampleId];
  const scope = `${q.fieldId ? 'field_id' : 'sample_id'} = $1 and link_run_id in (select id from link_runs where current)`;
  const filters: string[] = [];
  const add = (clause: string, value: unknown) => { params.push(value); filters.push(clause.replace('?', `$${params.length}`)); };
  if (q.minHeightNm !== undefined) add('height_nm >= ?', q.minHeightNm);
  if (q.maxHeightNm !== undefined) add('height_nm <= ?', q.maxHeightNm);
  if (q.minDiameterNm !== undefined) add('diameter_nm >= ?', q.minDiameterNm);
  if (q.maxDiameterNm !== undefined) add('diameter_nm <= ?', q.maxDiameterNm);
  if (q.phenotype) add('phenotype = ?', q.phenotype);
  const where = [scope, ...filters].join(' and ');
  params.push(q.pageSize, q.page * q.pageSize);
  const [limit, offset] = [`$${params.length - 1}`, `$${params.length}`];
  const text = `select
    (select coalesce(json_agg(p), '[]'::json) from (
       select id, field_id as "fieldId", index, x_afm_px as "xAfmPx", y_afm_px as "yAfmPx", x_fl_px as "xFlPx", y_fl_px as "yFlPx",
              height_nm as "heightNm", diameter_nm as "diameterNm", volume_nm3 as "volumeNm3", sphere_diameter_nm as "sphereDiameterNm",
              contact_angle_deg as "contactAngleDeg", cap_base_diameter_nm as "capBaseDiameterNm", cap_volume_nm3 as "capVolumeNm3",
              cap_flag as "capFlag", split, out_of_frame as "outOfFrame", phenotype, markers
         from vesicles where ${where}
        order by ${SORT_SQL[q.sort]} ${q.dir === 'asc' ? 'asc' : 'desc'}, id asc limit ${limit} offset ${offset}) p) as rows,
    ${filters.length ? `(select count(*)::int from vesicles where ${where})` : 'null::int'} as filtered_total,
    (select coalesce(json_agg(ph), '[]'::json) from (
       select phenotype, count(*)::int as n from vesicles where ${scope} group by phenotype order by count(*) desc) ph) as phenotypes`;
  const [row] = (await db.$client.query(text, params)).rows as { rows: VesicleRowOut[]; filtered_total: number | null; phenotypes: { phenotype: string; n: number }[] }[];
  // unfiltered, the total is the sum of the phenotype counts
  const total = row.filtered_total ?? row.phenotypes.reduce((t, p) => t + p.n, 0);
  return { rows: row.rows, total, phenotypes: row.phenotypes };
}

type VesicleRowOut = {
  id: number; fieldId: string; index: number; xAfmPx: number; yAfmPx: number; xFlPx: number | null; yFlPx: number | null;
  heightNm: number; diameterNm: number; volumeNm3: number; sphereDiameterNm: number | null; contactAngleDeg: number | null;
  capBaseDiameterNm: number | null; capVolumeNm3: number | null; capFlag: string | null; split: boolean; outOfFrame: boolean; phenotype: string; markers: unknown;
};
