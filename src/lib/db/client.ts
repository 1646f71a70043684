/** Drizzle over a pg pool. One pool per process; cached on globalThis so dev reloads do not leak connections. */
import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import { createHash } from 'node:crypto';
import { Pool, type QueryConfig } from 'pg';
import * as schema from './schema';

/** Distinct statements named per process; beyond this, new texts run unnamed (bounds PostgreSQL's memory). */
const MAX_NAMED_STATEMENTS = 500;

/**
 * Runs every SELECT sent through the pool as a named prepared statement, so each connection parses and
 * plans a query text once instead of on every request. On the results routes planning was most of
 * PostgreSQL's time (0.2–0.8 ms a query for 0.07 ms of execution; docs/benchmarks.md, "Load").
 * The name is a hash of the text, so the same text always gets the same name on every connection.
 */
function prepareSelects(pool: Pool): void {
  const names = new Map<string, string>();
  const query = pool.query.bind(pool) as (config: unknown, values?: unknown, callback?: unknown) => unknown;
  const nameFor = (text: string): string | undefined => {
    let name = names.get(text);
    if (!name && names.size < MAX_NAMED_STATEMENTS && /^\s*select\b/i.test(text)) {
      name = `hl_${createHash('sha1').update(text).digest('base64url')}`;
      names.set(text, name);
    }
    return name;
  };
  (pool as unknown as { query: typeof query }).query = (config, values, callback) => {
    if (typeof config === 'string' && Array.isArray(values)) {
      const name = nameFor(config);
      if (name) return query({ name, text: config }, values, callback);
    } else if (config && typeof config === 'object' && !(config as QueryConfig).name && typeof (config as QueryConfig).text === 'string') {
      const name = nameFor((config as QueryConfig).text);
      if (name) return query({ ...(config as QueryConfig), name }, values, callback);
    }
    return query(config, values, callback);
  };
}

export type Db = NodePgDatabase<typeof schema> & { $client: Pool };

/** Builds a database handle for `url` (tests and scripts call this directly). */
export function createDb(url: string, max = 20): Db {
  // 30 s to connect: a worker's synchronous analysis can hold the event loop for seconds on a busy machine, and a
  // connection attempt timed on the wall clock must not fail a job for it.
  const pool = new Pool({ connectionString: url, max, connectionTimeoutMillis: 30_000, idleTimeoutMillis: 30_000 });
  // A dropped connection (e.g. PostgreSQL restarting) must not crash the process; the pool reconnects.
  pool.on('error', (err) => console.error('[db] idle client error:', err.message));
  prepareSelects(pool);
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
