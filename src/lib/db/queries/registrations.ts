import { desc, eq } from 'drizzle-orm';
import type { Db } from '../client';
import { registrations, users } from '../schema';

/** Every saved registration of a field, newest first, with who saved it. */
export async function listRegistrations(db: Db, fieldId: string) {
  const rows = await db
    .select({ r: registrations, name: users.name })
    .from(registrations)
    .leftJoin(users, eq(users.id, registrations.createdBy))
    .where(eq(registrations.fieldId, fieldId))
    .orderBy(desc(registrations.version));
  return rows.map(({ r, name }) => ({
    id: r.id, version: r.version, model: r.model, pairs: r.pairs, flFromAfm: r.flFromAfm, freNm: r.freNm, treNm: r.treNm,
    createdAt: r.createdAt.toISOString(), createdByName: name,
  }));
}
