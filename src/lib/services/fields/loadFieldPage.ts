import { and, desc, eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { fieldReviews, linkRuns, users } from '../../db/schema';
import { getFieldDetail } from '../../db/queries/fields';
import { fieldReleaseVersions } from '../../db/queries/fieldRemoval';
import { listBeads, markerCallSummary } from '../../db/queries/linkRunDetails';
import { getStorage } from '../../storage/client';
import { getBytes } from '../../storage/objects';
import { detectionKey } from '../../storage/keys';
import type { FieldDetection } from '../../jobs/detectionTypes';

/**
 * What the field page shows: files and tile layers, the reviews (newest first), the current linking with its marker
 * calls and beads, the stored detection (with the settings it used; null before processing or when unreadable), and
 * whether removal is offered.
 * @param mayRemove - whether the caller's role allows removing fields; removal is then offered for what the server
 *   would allow (not approved, not being ingested, in no release)
 */
export async function loadFieldPage(db: Db, field: { id: string; status: string }, mayRemove: boolean) {
  const id = field.id;
  const detail = await getFieldDetail(db, id);
  const reviews = (await db.select({ decision: fieldReviews.decision, comment: fieldReviews.comment, reviewedAt: fieldReviews.reviewedAt, reviewer: users.name })
    .from(fieldReviews).leftJoin(users, eq(users.id, fieldReviews.reviewedBy)).where(eq(fieldReviews.fieldId, id)).orderBy(desc(fieldReviews.reviewedAt)))
    .map((r) => ({ ...r, reviewedAt: r.reviewedAt.toISOString() }));
  const [run] = await db.select().from(linkRuns).where(and(eq(linkRuns.fieldId, id), eq(linkRuns.current, true)));
  const removable = mayRemove && !['approved', 'ingesting'].includes(field.status) && (await fieldReleaseVersions(db.$client, id)).length === 0;
  let detection: FieldDetection | null = null;
  if (['ready', 'registered', 'linked', 'approved'].includes(field.status)) {
    try {
      detection = JSON.parse(new TextDecoder().decode(await getBytes(await getStorage(), detectionKey(id))));
    } catch {
      detection = null; // the form then offers the defaults; the viewer reports a missing detection itself
    }
  }
  // per marker: what "positive" means, positives over the vesicles measured there, chance colocalisation
  const calls = run ? await markerCallSummary(db, run) : [];
  const runBeads = run ? await listBeads(db, run.id) : [];
  return { detail, reviews, run: run ?? null, removable, detection, calls, runBeads };
}
