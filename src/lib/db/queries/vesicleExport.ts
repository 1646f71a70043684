/** Keyset paging through the vesicle rows of released or current link runs, for the per-vesicle export. */
import { and, asc, eq, gt } from 'drizzle-orm';
import type { Db } from '../client';
import { vesicles } from '../schema';

/** One vesicle row of the per-vesicle export: the whole stored row (vesicleRecordFromRow turns it into a record). */
export type VesicleExportRow = typeof vesicles.$inferSelect;

/**
 * Pages through the vesicle rows of `linkRunIds` by keyset (link run, then id), `pageSize` rows per
 * query, so an export of any size holds one page in memory.
 */
export async function* pageVesicles(db: Db, linkRunIds: string[], pageSize = 5000): AsyncGenerator<VesicleExportRow[]> {
  for (const runId of [...linkRunIds].sort()) {
    let after = 0;
    for (;;) {
      const page = await db.select().from(vesicles).where(and(eq(vesicles.linkRunId, runId), gt(vesicles.id, after))).orderBy(asc(vesicles.id)).limit(pageSize);
      if (page.length === 0) break;
      yield page;
      after = page[page.length - 1].id;
      if (page.length < pageSize) break;
    }
  }
}
