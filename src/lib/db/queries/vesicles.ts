/** Server-side paging, sorting and filtering of the current vesicle rows of a field or a sample. */
import { and, asc, count, desc, eq, gte, lte, sql, type SQL } from 'drizzle-orm';
import type { Db } from '../client';
import { vesicles, linkRuns } from '../schema';
import type { VesicleQuery } from '../../schemas/vesicles';

const SORT = { index: vesicles.index, heightNm: vesicles.heightNm, diameterNm: vesicles.diameterNm, volumeNm3: vesicles.volumeNm3, phenotype: vesicles.phenotype } as const;

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

export async function pageVesicles(db: Db, q: VesicleQuery) {
  const where = vesicleFilter(q);
  const order = q.dir === 'asc' ? asc(SORT[q.sort]) : desc(SORT[q.sort]);
  const base = q.fieldId ? eq(vesicles.fieldId, q.fieldId) : eq(vesicles.sampleId, q.sampleId!);
  const current = sql`${vesicles.linkRunId} in (select ${linkRuns.id} from ${linkRuns} where ${linkRuns.current})`;
  const filtered = q.minHeightNm !== undefined || q.maxHeightNm !== undefined || q.minDiameterNm !== undefined || q.maxDiameterNm !== undefined || !!q.phenotype;
  const [rows, counted, phenotypes] = await Promise.all([
    db.select({
      id: vesicles.id, fieldId: vesicles.fieldId, index: vesicles.index, xAfmPx: vesicles.xAfmPx, yAfmPx: vesicles.yAfmPx, xFlPx: vesicles.xFlPx, yFlPx: vesicles.yFlPx,
      heightNm: vesicles.heightNm, diameterNm: vesicles.diameterNm, volumeNm3: vesicles.volumeNm3, sphereDiameterNm: vesicles.sphereDiameterNm,
      contactAngleDeg: vesicles.contactAngleDeg, outOfFrame: vesicles.outOfFrame, phenotype: vesicles.phenotype, markers: vesicles.markers,
    }).from(vesicles).where(where).orderBy(order, asc(vesicles.id)).limit(q.pageSize).offset(q.page * q.pageSize),
    // unfiltered, the total is the sum of the phenotype counts: one query fewer on the common path
    filtered ? db.select({ n: count() }).from(vesicles).where(where) : Promise.resolve(null),
    db.select({ phenotype: vesicles.phenotype, n: count() }).from(vesicles).where(and(base, current)).groupBy(vesicles.phenotype).orderBy(desc(count())),
  ]);
  const total = counted ? counted[0].n : phenotypes.reduce((t, p) => t + p.n, 0);
  return { rows, total, phenotypes };
}
