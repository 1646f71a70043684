import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, renameSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { ImagingError } from './errors';
import { DECODE_THREAD_KIND, type DecodedTiff, type DecodeReply, type TiffLimits } from './tiffTypes';

export interface DecodeInWorkerOptions {
  /** Wall-clock budget for the whole decode (ms); the worker is terminated when it runs over. @default 5000 */
  timeoutMs?: number;
  /** V8 old-generation heap of the worker (MiB); typed-array pixel buffers are limited by `limits` instead. @default 512 */
  maxHeapMb?: number;
  /**
   * The thread's entry, built JavaScript (decodeThread.ts compiled). Pass it when a bundler moves the file.
   * @default decodeThread.mjs beside a bundle; built on first use when running from the TypeScript sources
   */
  workerUrl?: URL;
}

/**
 * The thread's entry as JavaScript. Beside a bundle (scripts/build-cli.mjs) it is the decodeThread.mjs built with
 * it. Running from the TypeScript sources (tsx, vitest), a worker thread has no TypeScript loader, so esbuild (a
 * development dependency) builds decodeThread.ts once per process into node_modules/.cache, where its packages
 * resolve as from the sources; the file name carries a hash of the build, so processes never overwrite each other's.
 */
let builtThreadUrl: URL | undefined;
function defaultThreadUrl(): URL {
  if (!import.meta.url.endsWith('.ts')) return new URL('./decodeThread.mjs', import.meta.url);
  if (builtThreadUrl) return builtThreadUrl;
  const require = createRequire(import.meta.url);
  const esbuild = require('esbuild') as typeof import('esbuild');
  const entry = fileURLToPath(new URL('./decodeThread.ts', import.meta.url));
  const out = esbuild.buildSync({
    entryPoints: [entry], bundle: true, platform: 'node', format: 'esm', target: 'node20', packages: 'external', write: false, logLevel: 'silent',
  }).outputFiles[0].contents;
  const dir = join(dirname(require.resolve('esbuild/package.json')), '..', '.cache', 'heightlight');
  const file = join(dir, `decodeThread-${createHash('sha256').update(out).digest('hex').slice(0, 16)}.mjs`);
  if (!existsSync(file)) {
    mkdirSync(dir, { recursive: true });
    const temporary = `${file}.${process.pid}.tmp`;
    writeFileSync(temporary, out);
    renameSync(temporary, file);
  }
  builtThreadUrl = pathToFileURL(file);
  return builtThreadUrl;
}

/** Idle threads kept per (worker file, heap limit); more run at once when callers overlap. */
const MAX_IDLE_PER_KIND = Math.max(1, availableParallelism());
/** An idle thread is stopped after this long, so that a quiet server holds no decoder heap. */
const IDLE_STOP_MS = 30_000;

interface Pending {
  id: number;
  resolve: (r: DecodedTiff) => void;
  reject: (e: ImagingError) => void;
  timer: NodeJS.Timeout;
}

interface DecoderThread {
  kind: string;
  worker: Worker;
  pending: Pending | null;
  idleTimer: NodeJS.Timeout | null;
  dead: boolean;
}

const idle = new Map<string, DecoderThread[]>();
const live = new Set<DecoderThread>();
let started = 0;
let nextId = 1;

function removeIdle(t: DecoderThread): void {
  const list = idle.get(t.kind);
  const i = list?.indexOf(t) ?? -1;
  if (list && i >= 0) list.splice(i, 1);
  if (t.idleTimer) clearTimeout(t.idleTimer);
  t.idleTimer = null;
}

/** Stops a thread for good: after a timeout, a crash or an out-of-memory stop it is never reused. */
function retire(t: DecoderThread): Promise<unknown> {
  if (t.dead) return Promise.resolve();
  t.dead = true;
  removeIdle(t);
  live.delete(t);
  return t.worker.terminate();
}

function settle(t: DecoderThread, fn: (p: Pending) => void): void {
  const p = t.pending;
  if (!p) return;
  t.pending = null;
  clearTimeout(p.timer);
  fn(p);
}

function startThread(kind: string, workerUrl: URL, maxHeapMb: number): DecoderThread {
  const worker = new Worker(workerUrl, {
    workerData: { kind: DECODE_THREAD_KIND },
    resourceLimits: {
      maxOldGenerationSizeMb: maxHeapMb,
      maxYoungGenerationSizeMb: Math.min(64, Math.max(8, Math.floor(maxHeapMb / 8))),
      stackSizeMb: 4,
    },
  });
  const t: DecoderThread = { kind, worker, pending: null, idleTimer: null, dead: false };
  started++;
  live.add(t);
  worker.on('message', (reply: DecodeReply) => {
    if (t.pending?.id !== reply.id) return; // a late answer to a request that already timed out
    settle(t, (p) => {
      if (reply.ok && reply.result) p.resolve(reply.result);
      else p.reject(new ImagingError(reply.code ?? 'worker_failed', reply.message ?? 'The image could not be read.', reply.details));
    });
    release(t);
  });
  worker.on('error', (err: Error & { code?: string }) => {
    settle(t, (p) => p.reject(err.code === 'ERR_WORKER_OUT_OF_MEMORY'
      ? new ImagingError(
        'too_large',
        'Reading the image needed more memory than Heightlight allows. The file may be damaged, or its compressed data expands to more than it declares.',
        { cause: err.message },
      )
      : new ImagingError('worker_failed', 'The image reader stopped unexpectedly. Try again; if it happens again, export the file again.', { cause: err.message })));
    void retire(t);
  });
  worker.on('exit', (exitCode) => {
    settle(t, (p) => p.reject(new ImagingError(
      'worker_failed',
      'The image reader stopped before it finished. Try again; if it happens again, export the file again.',
      { exitCode },
    )));
    t.dead = true;
    removeIdle(t);
    live.delete(t);
  });
  return t;
}

/** Puts a thread that answered back in the idle list, or stops it when enough are idle. */
function release(t: DecoderThread): void {
  if (t.dead) return;
  const list = idle.get(t.kind) ?? [];
  if (list.length >= MAX_IDLE_PER_KIND) {
    void retire(t);
    return;
  }
  list.push(t);
  idle.set(t.kind, list);
  t.worker.unref(); // an idle decoder must not keep a script or the test runner alive
  t.idleTimer = setTimeout(() => void retire(t), IDLE_STOP_MS);
  t.idleTimer.unref();
}

function acquire(workerUrl: URL, maxHeapMb: number): DecoderThread {
  const kind = `${workerUrl.href}|${maxHeapMb}`;
  const list = idle.get(kind);
  const t = list?.pop();
  if (t) {
    if (t.idleTimer) clearTimeout(t.idleTimer);
    t.idleTimer = null;
    t.worker.ref();
    return t;
  }
  return startThread(kind, workerUrl, maxHeapMb);
}

/**
 * Runs decodeTiff in a worker thread with a heap limit and a timeout, so that a hostile or broken file
 * cannot stall or crash the server. Threads are reused between files while they answer normally; a
 * thread that runs over its time, runs out of heap or stops is terminated and never reused, so a bad
 * file only ever takes down its own thread. The input is copied; the decoded pages are transferred back.
 * @param bytes - the whole file (not modified, not detached)
 * @param limits - size limits checked before decoding; missing fields take DEFAULT_LIMITS
 * @param options - timeout, heap limit and worker location
 * @returns the decoded pages and the metadata
 * @throws ImagingError with the codes of decodeTiff, plus timeout (ran over timeoutMs), too_large
 * (worker ran out of memory) and worker_failed (the worker stopped without an answer)
 */
export function decodeInWorker(
  bytes: Uint8Array | ArrayBuffer,
  limits: TiffLimits = {},
  options: DecodeInWorkerOptions = {},
): Promise<DecodedTiff> {
  const { timeoutMs = 5000, maxHeapMb = 512, workerUrl = defaultThreadUrl() } = options;
  const copy = bytes instanceof Uint8Array ? bytes.slice() : new Uint8Array(bytes.slice(0));

  return new Promise<DecodedTiff>((resolve, reject) => {
    const t = acquire(workerUrl, maxHeapMb);
    const id = nextId++;
    const timer = setTimeout(() => {
      settle(t, (p) => p.reject(new ImagingError(
        'timeout',
        `Reading the image took longer than ${(timeoutMs / 1000).toFixed(1)} s and was stopped. The file may be damaged or unusually large; try exporting it again.`,
      )));
      void retire(t);
    }, timeoutMs);
    t.pending = { id, resolve, reject, timer };
    t.worker.postMessage({ id, bytes: copy, limits }, [copy.buffer]);
  });
}

/** Counts for tests and diagnostics: threads started since the process began, and threads alive now (busy or idle). */
export function decodeThreadStats(): { started: number; live: number; idle: number } {
  let nbIdle = 0;
  for (const list of idle.values()) nbIdle += list.length;
  return { started, live: live.size, idle: nbIdle };
}

/** Stops every decoder thread (idle or busy; a busy caller gets worker_failed). For shutdown and tests. */
export async function closeDecodeThreads(): Promise<void> {
  await Promise.all([...live].map(retire));
}
