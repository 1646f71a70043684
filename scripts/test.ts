/**
 * `npm test`: throw-away PostgreSQL, s3rver and SMTP sink on other ports and folders, a production
 * build of the app served on 127.0.0.1, then the type check, the import rule (ESLint) and every vitest
 * project (unit, integration, browser). Services stop even when tests fail; the exit code is the tests'.
 * `--project unit` alone runs only the unit tests: no services, type check, import rule or build.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { rmSync, existsSync } from 'node:fs';
import { resolve } from 'node:path';
import { embeddedSettings } from './lib/env';
import { startServices } from './lib/services';
import { seedAll } from './lib/seedAll';
import { runPilot } from './lib/runPilot';
import { createTemplateDatabase } from './lib/testDatabases';

const log = (m: string) => console.log(`[test] ${m}`);

function ensureChromium() {
  if (existsSync('/usr/bin/chromium')) return;
  if (process.getuid?.() !== 0) throw new Error('Chromium is missing: run `sudo apt-get install -y chromium`.');
  log('installing Chromium from Debian packages ...');
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
  const r = spawnSync('apt-get', ['install', '-y', '-qq', 'chromium'], { stdio: 'inherit', env });
  if (r.status !== 0) throw new Error('apt-get install chromium failed');
}

async function waitForHttp(url: string, timeoutMs: number) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    try {
      const r = await fetch(url);
      if (r.status < 500) return;
    } catch {
      /* not up yet */
    }
    await new Promise((r) => setTimeout(r, 300));
  }
  throw new Error(`the app did not answer at ${url} within ${timeoutMs / 1000} s`);
}

/** Projects named on the command line (`--project unit` or `--project=unit`); none means every project. */
function requestedProjects(argv: string[]): string[] {
  const out: string[] = [];
  argv.forEach((a, i) => {
    if (a === '--project') out.push(argv[i + 1] ?? '');
    else if (a.startsWith('--project=')) out.push(a.slice('--project='.length));
  });
  return out;
}

async function main() {
  // Only the pure unit tests asked for: they need no services, no type check and no build.
  const projects = requestedProjects(process.argv.slice(2));
  if (projects.length > 0 && projects.every((p) => p === 'unit')) {
    log('unit tests only: no services, type check or build');
    const v = spawnSync('npx', ['vitest', 'run', ...process.argv.slice(2)], { stdio: 'inherit' });
    process.exit(v.status ?? 1);
  }
  process.env.HEIGHTLIGHT_DATA_DIR ??= resolve('.test-data');
  rmSync(process.env.HEIGHTLIGHT_DATA_DIR, { recursive: true, force: true });
  const s = embeddedSettings('test');
  Object.assign(process.env, s.env, { NODE_ENV: 'test' });
  // A worker killed mid-job has its job retried after this expiry; short, so tests/integration/faults.test.ts stays quick.
  process.env.JOB_EXPIRE_SECONDS ??= '30';
  const children: ChildProcess[] = [];
  let services: Awaited<ReturnType<typeof startServices>> | undefined;
  let code = 1;
  try {
    ensureChromium();
    services = await startServices(s, log);
    // the template that integration files copy into a database of their own (tests/support/fixtures.ts, ownDb)
    log(`template database ${await createTemplateDatabase(s.env.DATABASE_URL)} migrated and seeded`);
    // the worker starts before the seed, the type check and the build, so the demo fields are ingested meanwhile
    const worker = spawn(process.execPath, ['scripts/run-bundled.mjs', 'worker'], { stdio: ['ignore', 'ignore', 'inherit'], env: process.env });
    children.push(worker);
    // The demo pilot costs the worker minutes: it is made for the whole suite, or when a test that reads it is named.
    const named = process.argv.slice(2).filter((x) => /\.test\.ts$/.test(x));
    const withPilot = process.env.HEIGHTLIGHT_SKIP_PILOT !== '1' && (named.length === 0 || named.some((x) => /demo-pilot|first-screens/.test(x)));
    await seedAll(s.env, log, { pilot: withPilot });

    // Skipping the type check is for quick local iterations only; CI always runs it.
    if (process.env.HEIGHTLIGHT_SKIP_TYPECHECK !== '1' || process.env.CI) {
      log('type check (tsc --noEmit) ...');
      const tsc = spawnSync('npx', ['tsc', '--noEmit', '-p', 'tsconfig.check.json'], { stdio: 'inherit' });
      if (tsc.status !== 0) throw new Error('type check failed');
    }

    // The import rule that keeps the layers apart (eslint.config.mjs, docs/architecture.md).
    log('import rule (eslint src) ...');
    const lint = spawnSync('npx', ['eslint', '--cache', '--cache-location', 'node_modules/.cache/eslint/', 'src'], { stdio: 'inherit' });
    if (lint.status !== 0) throw new Error('the import rule failed (npx eslint src)');

    log('building the app ...');
    const b = spawnSync('npx', ['astro', 'build'], { stdio: ['ignore', 'ignore', 'inherit'] });
    if (b.status !== 0) throw new Error('astro build failed');
    const outDir = process.env.HEIGHTLIGHT_OUT_DIR ?? 'dist';
    const app = spawn(process.execPath, [`${outDir}/server/entry.mjs`], { stdio: ['ignore', 'ignore', 'inherit'], env: process.env });
    children.push(app);
    await waitForHttp(`${s.env.PUBLIC_URL}/signin`, 60_000);
    log(`app up at ${s.env.PUBLIC_URL}`);
    // the demo pilot through registration, linking, approval and release with the worker, before any test
    // reads it (tests/integration/demo-pilot.test.ts checks what it left); HEIGHTLIGHT_SKIP_PILOT=1 skips it
    if (withPilot) await runPilot(s.env, log);

    // Asynchronous on purpose: the S3 fake and the SMTP sink live in this process and must keep answering.
    const args = ['vitest', 'run', ...process.argv.slice(2)];
    const v = spawn('npx', args, { stdio: 'inherit', env: { ...process.env, HEIGHTLIGHT_APP_URL: s.env.PUBLIC_URL } });
    children.push(v);
    code = await new Promise<number>((res) => v.on('exit', (c) => res(c ?? 1)));
  } catch (e) {
    console.error('[test] setup failed:', e instanceof Error ? e.message : e);
    code = 1;
  } finally {
    for (const c of children) c.kill('SIGTERM');
    await services?.stop();
  }
  process.exit(code);
}

void main();
