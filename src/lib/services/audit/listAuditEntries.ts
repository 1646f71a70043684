import { and, desc, eq, ilike, gte, lt, type SQL } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { auditLog } from '../../db/schema';
import type { AuditAction } from '../../audit';

/** The filters of the audit page, already checked; an empty string or null leaves a filter out. */
export interface AuditFilter {
  action: AuditAction | '';
  /** Part of the actor's e-mail, matched case-insensitively (`%` and `_` match themselves). */
  actor: string;
  /** A day, YYYY-MM-DD: entries from then on. Anything else is ignored. */
  since: string;
  /** Keyset cursor: only entries numbered below this (the last entry of the page before). */
  before: number | null;
}

/**
 * One page of the audit log, newest first. Entry numbers grow in the order entries were written, so they order the
 * log and make a stable cursor.
 * @returns the page and whether older entries follow
 */
export async function listAuditEntries(db: Db, filter: AuditFilter, pageSize: number) {
  const where: SQL[] = [];
  if (filter.action) where.push(eq(auditLog.action, filter.action));
  if (filter.actor) where.push(ilike(auditLog.actorEmail, `%${filter.actor.replace(/[%_\\]/g, '\\$&')}%`));
  if (/^\d{4}-\d{2}-\d{2}$/.test(filter.since)) where.push(gte(auditLog.at, new Date(filter.since)));
  if (filter.before !== null) where.push(lt(auditLog.id, filter.before));
  const fetched = await db.select().from(auditLog).where(where.length ? and(...where) : undefined).orderBy(desc(auditLog.id)).limit(pageSize + 1);
  return { rows: fetched.slice(0, pageSize), hasOlder: fetched.length > pageSize };
}
