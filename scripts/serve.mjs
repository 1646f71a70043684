// Serves the built app with one process per core (WEB_CONCURRENCY, default: all cores), sharing
// the port through Node's cluster module; a worker that dies is replaced.
import cluster from 'node:cluster';
import { availableParallelism } from 'node:os';

const n = Math.max(1, Number(process.env.WEB_CONCURRENCY || availableParallelism()));
const entry = new URL(`../${process.env.HEIGHTLIGHT_OUT_DIR ?? 'dist'}/server/entry.mjs`, import.meta.url);

if (cluster.isPrimary && n > 1) {
  for (let i = 0; i < n; i++) cluster.fork();
  let stopping = false;
  cluster.on('exit', (w, code, signal) => {
    if (stopping) return;
    console.error(`[serve] web process ${w.process.pid} exited (${signal ?? code}); starting another`);
    cluster.fork();
  });
  for (const sig of ['SIGINT', 'SIGTERM']) {
    process.on(sig, () => {
      stopping = true;
      for (const w of Object.values(cluster.workers ?? {})) w?.kill('SIGTERM');
      setTimeout(() => process.exit(0), 2000).unref();
    });
  }
} else {
  await import(entry.href);
}
