/**
 * The decoder thread's one entry (started by decodeInWorker.ts): answers any number of decode requests, one at a
 * time, so that starting a thread and loading geotiff (about 0.2 s) is paid once per thread, not once per file.
 * Built to JavaScript beside the worker's bundle (scripts/build-cli.mjs), or on first use when running from the
 * TypeScript sources (decodeInWorker.ts); it only answers in a thread that decodeInWorker started.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { asImagingError, decodeTiff } from './decodeTiff';
import { DECODE_THREAD_KIND, type DecodeReply, type DecodeRequest } from './tiffTypes';

const port = parentPort;
if (port && (workerData as { kind?: string } | null)?.kind === DECODE_THREAD_KIND) {
  port.on('message', async ({ id, bytes, limits }: DecodeRequest) => {
    try {
      const result = await decodeTiff(bytes, limits);
      const reply: DecodeReply = { id, ok: true, result };
      port.postMessage(reply, result.pages.map((p) => p.data.buffer as ArrayBuffer));
    } catch (err) {
      const e = asImagingError(err);
      const reply: DecodeReply = { id, ok: false, code: e.code, message: e.message, details: e.details };
      port.postMessage(reply);
    }
  });
}
