/**
 * The shared first half of the results routes: parse the request, check access, and pick the data
 * (latest release, or the lab's current analysis). JSON and CSV routes then only differ in output.
 */
import type { APIContext } from 'astro';
import { z } from 'zod';
import { parseParams, parseQuery, IdParam } from '../http/parse';
import { requireUser, requireStudyAction } from '../auth/session';
import { getDb } from '../db/client';
import { studyComparison } from './comparisonCache';
import { selectSampleResults } from './access';
import { ComparisonQuery, assertSourceAllowed } from './comparisonQuery';

const SourceQuery = z.object({ source: z.enum(['released', 'current']).default('released') });

/** A sample's results selection for `ctx` (401/403/404 as the guard decides). */
export async function sampleSelectionFor(ctx: APIContext) {
  requireUser(ctx.locals);
  const { id } = parseParams(ctx.params, IdParam);
  const { source } = parseQuery(ctx.url, SourceQuery);
  const db = await getDb();
  return { db, sel: await selectSampleResults(db, ctx.locals, id, source) };
}

/** A study's group comparison for `ctx`, with the query it answered. */
export async function studyComparisonFor(ctx: APIContext) {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user, membership } = await requireStudyAction(db, ctx.locals, id, 'results.read', 'see results of this study');
  const q = parseQuery(ctx.url, ComparisonQuery);
  assertSourceAllowed(user, membership, q.source);
  const result = (await studyComparison(db, id, q.source, q.groupA ?? null, q.groupB ?? null))!;
  return { q, result };
}
