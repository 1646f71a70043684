/**
 * The app's database handle, for pages and routes to hand to the guards and the services. Pages never build
 * queries themselves: ESLint forbids `drizzle-orm` and `lib/db` under src/pages (docs/architecture.md).
 */
import { getDb, type Db } from '../db/client';

/** The process-wide handle (one pool per process; see `getDb`). */
export async function appDb(): Promise<Db> {
  return getDb();
}
