/**
 * `npm run worker`: processes ingestion, detection and linking jobs from the PostgreSQL queue.
 * Run more of these, on more machines against the same PostgreSQL and S3, to scale out.
 */
import { getBoss } from '../src/lib/jobs/boss';
import { registerHandlers } from '../src/lib/jobs/handlers';
import { config } from '../src/lib/config';
import { getStorage } from '../src/lib/storage/client';
import { deleteOlderThan } from '../src/lib/storage/objects';
import { getDb } from '../src/lib/db/client';
import { sweepOrphanObjects } from '../src/lib/jobs/sweepOrphanObjects';
import { warmUpAnalysis } from '../src/lib/analysis/pipeline/warmUpAnalysis';

// A database restart can reject a queue call nobody awaits (pg-boss bookkeeping): log it and keep
// working; pg-boss reconnects and retries the job when its lease expires.
process.on('unhandledRejection', (reason) => {
  console.error('[worker] unhandled rejection (continuing):', reason instanceof Error ? reason.message : reason);
});

async function main() {
  // compile the analysis' hot loops on a small invented field before taking jobs, so the first real field after a
  // start runs at the speed of the later ones (npm run bench:cold measures first against tenth)
  const warmUpStarted = performance.now();
  warmUpAnalysis();
  console.log(`[worker] analysis warmed up in ${((performance.now() - warmUpStarted) / 1000).toFixed(1)} s`);
  const boss = await getBoss(config().DATABASE_URL);
  await registerHandlers(boss);
  console.log('[worker] waiting for jobs');
  // uploads staged but never confirmed (the browser closed, a rejected field) are swept after a day,
  // and so are field copies left without a field row (object store failed partway through createField)
  const sweep = async () => {
    const dayAgo = new Date(Date.now() - 24 * 3600 * 1000);
    try {
      const n = await deleteOlderThan(await getStorage(), 'staging/', dayAgo);
      if (n) console.log(`[worker] removed ${n} abandoned staged upload(s)`);
    } catch (e) {
      console.error('[worker] staging sweep failed:', (e as Error).message);
    }
    try {
      const r = await sweepOrphanObjects(await getDb(), await getStorage(), dayAgo);
      if (r.prefixes.length) console.log(`[worker] removed ${r.objects} object(s) of ${r.prefixes.length} field(s) without a database row`);
    } catch (e) {
      console.error('[worker] orphan field sweep failed:', (e as Error).message);
    }
  };
  void sweep();
  setInterval(sweep, 3600 * 1000).unref();
  const stop = async () => {
    await boss.stop({ graceful: true, timeout: 10_000 }).catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

main().catch((e) => {
  // a configuration error (say, production without AUTH_SECRET) is a sentence to act on, not a stack trace
  console.error('[worker] failed to start:', e instanceof Error ? e.message : e);
  process.exit(1);
});
