/**
 * Load check (not a test): `npx tsx scripts/load.ts [--connections N] [--duration S] [--max-requests N] [--url URL]`.
 * Signs every connection in as its own session (as the demo analyst or the demo collaborator), then drives
 * each read route that exists with autocannon: the vesicle table, the field detection reply, a tile of the
 * height map, the study comparison and the sample results (the dashboard's API). Connections spread over
 * the processed demo fields and their samples. Prints requests/s, p50/p95/p99 latency and errors per
 * route, and PASS/MISS against "no errors and p99 under 300 ms".
 * Talks to 127.0.0.1/localhost only, and stops by itself: each route runs at most --duration seconds
 * and --max-requests requests. Defaults are a quick check (10 connections, 5 s); the documented
 * figure uses --connections 100 --duration 60 (docs/benchmarks.md, "Load").
 */
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { eq, inArray, sql } from 'drizzle-orm';
import { createDb } from '../src/lib/db/client';
import { fields, samples } from '../src/lib/db/schema';
import { config } from '../src/lib/config';
import { cliArgs } from './lib/cliArgs';

const P99_BUDGET_MS = 300;

// autocannon ships no type declarations; the part used here, typed.
interface AutocannonResult { errors: number; timeouts: number; non2xx: number; requests: { average: number; total: number } }
interface AutocannonInstance extends PromiseLike<AutocannonResult> {
  on(event: 'response', fn: (client: unknown, statusCode: number, resBytes: number, responseTimeMs: number) => void): void;
}
const autocannon = createRequire(import.meta.url)('autocannon') as (opts: Record<string, unknown>) => AutocannonInstance;

const args = cliArgs(
  {
    url: { type: 'string' },
    connections: { type: 'string', default: '10' },
    duration: { type: 'string', default: '5' },
    'max-requests': { type: 'string' },
    password: { type: 'string' },
  },
  'usage: npx tsx scripts/load.ts [--connections N] [--duration S] [--max-requests N] [--url URL] [--password P]',
);
const base = (args.url ?? process.env.HEIGHTLIGHT_APP_URL ?? config().PUBLIC_URL).replace(/\/$/, '');
const connections = Number(args.connections);
const durationS = Number(args.duration);
const maxRequests = Number(args['max-requests'] ?? '200000');
const password = args.password ?? process.env.DEMO_PASSWORD ?? 'vesicle-demo-2026';

/** Signs in through Auth.js's credentials flow, as the sign-in form does; returns the cookie header. */
async function signIn(email: string): Promise<string> {
  const jar = new Map<string, string>();
  const keep = (res: Response) => {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const i = pair.indexOf('=');
      jar.set(pair.slice(0, i), pair.slice(i + 1));
    }
  };
  const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
  const csrf = await fetch(`${base}/api/auth/csrf`);
  keep(csrf);
  const { csrfToken } = await csrf.json();
  const res = await fetch(`${base}/api/auth/callback/credentials`, {
    method: 'POST',
    redirect: 'manual',
    headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-auth-return-redirect': '1', cookie: cookie(), origin: base },
    body: new URLSearchParams({ email, password, csrfToken, callbackUrl: `${base}/` }),
  });
  keep(res);
  if (![...jar.keys()].some((k) => k.includes('session-token'))) throw new Error(`sign-in of ${email} failed (status ${res.status}): is the demo seeded?`);
  return cookie();
}

const percentile = (sorted: number[], p: number) => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)] : NaN);

interface Outcome { name: string; reqPerS: number; p50: number; p95: number; p99: number; requests: number; errors: number; pass: boolean }

/** `n` separate sessions of one user, four sign-ins at a time (each is an argon2 check on the server). */
async function sessions(email: string, n: number): Promise<string[]> {
  const out: string[] = [];
  while (out.length < n) out.push(...(await Promise.all(Array.from({ length: Math.min(4, n - out.length) }, () => signIn(email)))));
  return out;
}

/**
 * One route under load; exact percentiles from every response time (autocannon reports p97.5, not p95).
 * Connection k sends `paths[k % paths.length]` with `cookies[k]`: every client is its own signed-in session.
 */
async function drive(name: string, paths: string[], cookies: string[]): Promise<Outcome> {
  const times: number[] = [];
  // autocannon ignores `duration` when `amount` is set, so the request cap applies only when asked for
  const limit = args['max-requests'] !== undefined ? { amount: maxRequests } : { duration: durationS };
  let k = 0;
  const setupClient = (client: { setRequests(r: Record<string, unknown>[]): void }) => {
    const i = k++;
    client.setRequests([{ method: 'GET', path: paths[i % paths.length], headers: { cookie: cookies[i % cookies.length] } }]);
  };
  const instance = autocannon({ url: base + paths[0], connections, ...limit, timeout: 10, setupClient });
  instance.on('response', (_client, _status, _bytes, ms) => times.push(ms));
  const r = await instance;
  times.sort((a, b) => a - b);
  const errors = r.errors + r.timeouts + r.non2xx;
  const o = { name, reqPerS: r.requests.average, p50: percentile(times, 50), p95: percentile(times, 95), p99: percentile(times, 99), requests: r.requests.total, errors };
  return { ...o, pass: errors === 0 && o.p99 < P99_BUDGET_MS && o.requests > 0 };
}

async function main() {
  const host = new URL(base).hostname;
  if (!['127.0.0.1', 'localhost', '::1', '[::1]'].includes(host)) throw new Error(`refusing to load ${base}: only 127.0.0.1 or localhost`);
  // the processed demo fields and their samples, read from the database the app uses
  const db = createDb(config().DATABASE_URL, 1);
  const rows = await db.select({ fieldId: fields.id, sampleId: samples.id, studyId: samples.studyId, width: fields.afmWidthPx })
    .from(fields).innerJoin(samples, eq(samples.id, fields.sampleId)).where(inArray(fields.status, ['approved', 'linked', 'registered', 'ready']))
    .orderBy(sql`array_position(array['approved','linked','registered','ready']::field_status[], ${fields.status})`, fields.id).limit(10);
  await db.$client.end();
  if (!rows.length) throw new Error('no processed field: start the app with the demo (npm start) and let the worker ingest it');

  console.log(`load: signing in ${connections} analyst and ${connections} collaborator sessions ...`);
  const analyst = await sessions('analyst@demo.heightlight.test', connections);
  const collaborator = await sessions('collaborator@demo.heightlight.test', connections);
  // deepest Deep Zoom level of the height map (level = ceil(log2(max side)))
  const level = (w: number | null) => Math.ceil(Math.log2(w ?? 1));
  const targets = [
    { name: 'vesicle table (page of 50, sorted by height)', file: 'vesicles/index.ts', paths: rows.map((r) => `/api/vesicles?sampleId=${r.sampleId}&page=0&pageSize=50&sort=heightNm&dir=desc`), cookies: analyst },
    { name: 'field detection', file: 'fields/[id]/detection.ts', paths: rows.map((r) => `/api/fields/${r.fieldId}/detection`), cookies: analyst },
    { name: 'height tile', file: 'fields/[id]/tiles/[...path].ts', paths: rows.map((r) => `/api/fields/${r.fieldId}/tiles/height_files/${level(r.width)}/0_0.png`), cookies: analyst },
    { name: 'dashboard (comparison)', file: 'studies/[id]/comparison.ts', paths: [...new Set(rows.map((r) => `/api/studies/${r.studyId}/comparison`))], cookies: collaborator },
    { name: 'dashboard (sample results)', file: 'samples/[id]/results.ts', paths: [...new Set(rows.map((r) => `/api/samples/${r.sampleId}/results?source=current`))], cookies: analyst },
  ].filter((t) => existsSync(`src/pages/api/${t.file}`));

  console.log(`load: ${base}, ${connections} connections (one session each), ${durationS} s per route (at most ${maxRequests} requests each), ${rows.length} field(s)`);
  const out: Outcome[] = [];
  for (const t of targets) {
    // every path once first: a route that fails outright is reported, not hammered
    let failed = '';
    for (const path of t.paths) {
      const probe = await fetch(base + path, { headers: { cookie: t.cookies[0] } });
      await probe.arrayBuffer();
      if (!probe.ok) failed ||= `${path} answered ${probe.status}`;
    }
    if (failed) {
      console.log(`${t.name}: ${failed}; skipped`);
      out.push({ name: t.name, reqPerS: 0, p50: NaN, p95: NaN, p99: NaN, requests: 1, errors: 1, pass: false });
      continue;
    }
    out.push(await drive(t.name, t.paths, t.cookies));
  }
  const f = (n: number) => (Number.isFinite(n) ? n.toFixed(0) : '-');
  console.log('\nroute                     req/s   p50 ms  p95 ms  p99 ms  requests  errors  verdict');
  for (const o of out) {
    console.log(`${o.name.padEnd(24)} ${f(o.reqPerS).padStart(6)} ${f(o.p50).padStart(8)} ${f(o.p95).padStart(7)} ${f(o.p99).padStart(7)} ${String(o.requests).padStart(9)} ${String(o.errors).padStart(7)}  ${o.pass ? 'PASS' : 'MISS'}`);
  }
  const all = out.length > 0 && out.every((o) => o.pass);
  console.log(`\n${all ? 'PASS' : 'MISS'}: no errors and p99 under ${P99_BUDGET_MS} ms on every route`);
  process.exit(all ? 0 : 1);
}

main().catch((e) => {
  console.error(`load: ${(e as Error).message}`);
  process.exit(2);
});
