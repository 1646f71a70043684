/** Drizzle over a pg pool. One pool per process; cached on globalThis so dev reloads do not leak connections. */
import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import { Pool } from 'pg';
import * as schema from './schema';

export type Db = NodePgDatabase<typeof schema> & { $client: Pool };

/** Builds a database handle for `url` (tests and scripts call this directly). */
export function createDb(url: string, max = 20): Db {
  const pool = new Pool({ connectionString: url, max, connectionTimeoutMillis: 5000, idleTimeoutMillis: 30_000 });
  // A dropped connection (e.g. PostgreSQL restarting) must not crash the process; the pool reconnects.
  pool.on('error', (err) => console.error('[db] idle client error:', err.message));
  return drizzle(pool, { schema, casing: 'snake_case' }) as Db;
}

const g = globalThis as unknown as { __heightlightDb?: Db };

/** The process-wide handle for the app. */
export async function getDb(): Promise<Db> {
  if (!g.__heightlightDb) {
    const { config } = await import('../config');
    g.__heightlightDb = createDb(config().DATABASE_URL);
  }
  return g.__heightlightDb;
}
