/**
 * `npm start`: embedded PostgreSQL, S3 fake and SMTP sink on loopback, migrations, demo seed,
 * build, then the app and one job worker. Ctrl-C stops every child. Data stays in .data/.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { embeddedSettings } from './lib/env';
import { startServices } from './lib/services';
import { DEMO_USERS, DEMO_PASSWORD } from './seed';
import { seedAll } from './lib/seedAll';
import { runPilot } from './lib/runPilot';

const log = (m: string) => console.log(`[heightlight] ${m}`);

async function main() {
  const s = embeddedSettings('start');
  Object.assign(process.env, s.env);
  const services = await startServices(s, log);
  const children: ChildProcess[] = [];
  // the worker runs under node itself (not through npx) so that stopping it reaches the process; it starts
  // before the seed and the build, so demo fields are ingested while the others are generated and the app builds
  children.push(spawn(process.execPath, ['scripts/run-bundled.mjs', 'worker'], { stdio: 'inherit', env: process.env }));
  await seedAll(s.env, log);
  log('demo data seeded');
  // the demo pilot goes through registration, linking and release in the background (fast when done before)
  void runPilot(s.env, log).catch((e) => log(`demo pilot stopped: ${e instanceof Error ? e.message : e}`));
  if (process.env.HEIGHTLIGHT_SKIP_BUILD !== '1') {
    log('building the app (astro build) ...');
    // asynchronous, so the pilot driver keeps going while the app builds
    const status = await new Promise<number | null>((res) => spawn('npx', ['astro', 'build'], { stdio: 'inherit', env: process.env }).on('exit', res));
    if (status !== 0) {
      for (const c of children) c.kill('SIGTERM');
      throw new Error('astro build failed');
    }
  }
  children.push(spawn(process.execPath, ['scripts/serve.mjs'], { stdio: 'inherit', env: process.env }));

  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    log('stopping ...');
    // children first (the worker finishes its job's bookkeeping), then the services they use
    await Promise.all(children.map((c) => new Promise<void>((res) => {
      if (c.exitCode !== null || c.signalCode !== null) return res();
      const t = setTimeout(() => { c.kill('SIGKILL'); res(); }, 10_000);
      c.once('exit', () => { clearTimeout(t); res(); });
      c.kill('SIGTERM');
    })));
    await services.stop();
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
  for (const c of children) c.on('exit', (code) => { if (!stopping) { log(`a child exited (${code}); stopping`); void stop(); } });

  log(`Heightlight is up at ${s.env.PUBLIC_URL}`);
  log(`demo sign-ins (password "${DEMO_PASSWORD}" for each):`);
  for (const u of DEMO_USERS) log(`  ${u.role.padEnd(13)} ${u.email}`);
  log('press Ctrl-C to stop everything');
}

main().catch((e) => {
  console.error('[heightlight] start failed:', e instanceof Error ? e.message : e);
  process.exit(1);
});
