/** One pg-boss instance per process, against the app's PostgreSQL (schema `pgboss`). */
import PgBoss from 'pg-boss';
import { QUEUES } from './queues';

let boss: PgBoss | undefined;
let starting: Promise<PgBoss> | undefined;

export function getBoss(databaseUrl: string): Promise<PgBoss> {
  if (boss) return Promise.resolve(boss);
  starting ??= (async () => {
    const b = new PgBoss({ connectionString: databaseUrl, max: 4, schedule: false });
    b.on('error', (err) => console.error('[jobs] pg-boss error:', err.message));
    await b.start();
    for (const name of Object.values(QUEUES)) {
      // Three tries with back-off: a worker killed mid-job has its job retried by another.
      await b.createQueue(name, { name, retryLimit: 3, retryDelay: 5, retryBackoff: true, expireInSeconds: 15 * 60 }).catch(() => undefined);
    }
    boss = b;
    return b;
  })();
  return starting;
}
