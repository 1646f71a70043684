/**
 * Upload memory check (a benchmark, not a test): sends one large TIFF (default 1 GiB) through the
 * real path (presign → PUT straight to the S3 fake → server inspection) against a running app on
 * loopback, and prints the app server's resident memory (VmRSS) sampled every 100 ms.
 *   npx tsx scripts/bench-upload.ts [--url http://127.0.0.1:4321] [--side 16384]
 */
import { readFileSync } from 'node:fs';
import { execSync } from 'node:child_process';
import { parseArgs } from 'node:util';
import { AppClient } from '../tests/support/client';
import { writeTiff } from '../src/lib/imaging';

const { values } = parseArgs({ options: { url: { type: 'string', default: 'http://127.0.0.1:4321' }, side: { type: 'string', default: '16384' } } });
const url = new URL(values.url!);
if (!['127.0.0.1', 'localhost'].includes(url.hostname)) throw new Error('bench-upload talks to a local app only');
const side = Number(values.side);

const pid = execSync(`pgrep -f "${'dist'}/server/entry.mjs" | head -1`).toString().trim();
const rssMb = () => Number(readFileSync(`/proc/${pid}/status`, 'utf8').match(/VmRSS:\s+(\d+)/)![1]) / 1024;

const c = new AppClient(url.origin);
if (await c.signIn('biologist@demo.heightlight.test', 'vesicle-demo-2026')) throw new Error('sign-in failed: is the demo seeded?');
const studyId = (await (await c.fetch('/api/studies')).json()).studies[0].id;
console.log(`building a ${side} × ${side} float32 TIFF in this (client) process ...`);
const file = writeTiff([{ data: new Float32Array(side * side).fill(1.5), width: side, height: side }], { bitsPerSample: 32, sampleFormat: 'float', resolution: { x: 1e6, y: 1e6, unit: 'centimetre' } });
console.log(`file: ${(file.length / 1024 ** 3).toFixed(2)} GiB; app server pid ${pid}, RSS before ${rssMb().toFixed(0)} MB`);

let peak = rssMb();
const base = peak;
const timer = setInterval(() => { peak = Math.max(peak, rssMb()); }, 100);
const t0 = Date.now();
const { uploadId, url: put } = await (await c.json('/api/uploads', 'POST', { studyId, fileName: 'big.tif', sizeBytes: file.length })).json();
const r = await fetch(put, { method: 'PUT', body: Buffer.from(file.buffer, file.byteOffset, file.length) as unknown as BodyInit, headers: { 'content-type': 'image/tiff' } });
const t1 = Date.now();
const inspect = await c.json(`/api/uploads/${uploadId}/inspect`, 'POST', {});
const t2 = Date.now();
clearInterval(timer);
console.log(`PUT ${r.status} in ${((t1 - t0) / 1000).toFixed(1)} s; inspection ${inspect.status} in ${t2 - t1} ms: ${JSON.stringify(await inspect.json()).slice(0, 160)}`);
console.log(`app server RSS: before ${base.toFixed(0)} MB, peak ${peak.toFixed(0)} MB (+${(peak - base).toFixed(0)} MB) for a ${(file.length / 1024 ** 2).toFixed(0)} MB file`);
