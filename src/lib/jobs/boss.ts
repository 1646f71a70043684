/** One pg-boss instance per process, against the app's PostgreSQL (schema `pgboss` unless JOB_QUEUE_SCHEMA says otherwise). */
import PgBoss from 'pg-boss';
import { QUEUES } from './queues';
import { config } from '../config';

let boss: PgBoss | undefined;
let starting: Promise<PgBoss> | undefined;

/**
 * How long a job may stay active before pg-boss gives it up and retries it (a worker killed mid-job
 * leaves its job active until then), from JOB_EXPIRE_SECONDS.
 * @returns seconds; 15 minutes unless the environment says otherwise
 */
export function jobExpireSeconds(): number {
  return config().JOB_EXPIRE_SECONDS;
}

/**
 * The PostgreSQL schema that holds the queue, from JOB_QUEUE_SCHEMA. Workers only see jobs of their
 * own schema, so two installations can share one database, and a test can run workers of its own.
 * @returns a lower-case SQL identifier; `pgboss` unless the environment says otherwise
 */
export function jobQueueSchema(): string {
  return config().JOB_QUEUE_SCHEMA;
}

export function getBoss(databaseUrl: string): Promise<PgBoss> {
  if (boss) return Promise.resolve(boss);
  starting ??= (async () => {
    const expireInSeconds = jobExpireSeconds();
    // Expired jobs are found by the maintenance sweep; check often enough that a short expiry means something.
    const maintenanceIntervalSeconds = Math.max(1, Math.min(120, Math.floor(expireInSeconds / 4)));
    const b = new PgBoss({ connectionString: databaseUrl, schema: jobQueueSchema(), max: 4, schedule: false, maintenanceIntervalSeconds });
    b.on('error', (err) => console.error('[jobs] pg-boss error:', err.message));
    await b.start();
    for (const name of Object.values(QUEUES)) {
      // Three tries with back-off: a worker killed mid-job has its job retried by another.
      const options = { name, retryLimit: 3, retryDelay: 5, retryBackoff: true, expireInSeconds };
      await b.createQueue(name, options).catch(() => undefined);
      // An existing queue keeps its old settings otherwise.
      await b.updateQueue(name, options).catch(() => undefined);
    }
    boss = b;
    return b;
  })();
  return starting;
}
