import { migrate } from 'drizzle-orm/node-postgres/migrator';
import type { Db } from './client';

/** Applies the committed SQL migrations in /drizzle. */
export async function runMigrations(db: Db, migrationsFolder = 'drizzle') {
  await migrate(db, { migrationsFolder });
}
