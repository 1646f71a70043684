import { Worker } from 'node:worker_threads';
import {
  ImagingError, WORKER_KIND, type DecodedTiff, type ImagingErrorCode, type TiffLimits,
} from './decodeWorker.mjs';

export interface DecodeInWorkerOptions {
  /** Wall-clock budget for the whole decode (ms); the worker is terminated when it runs over. @default 5000 */
  timeoutMs?: number;
  /** V8 old-generation heap of the worker (MiB); typed-array pixel buffers are limited by `limits` instead. @default 512 */
  maxHeapMb?: number;
  /**
   * Location of decodeWorker.mjs. Pass it when a bundler moves the file.
   * @default new URL('./decodeWorker.mjs', import.meta.url)
   */
  workerUrl?: URL;
}

interface WorkerReply {
  ok: boolean;
  result?: DecodedTiff;
  code?: ImagingErrorCode;
  message?: string;
  details?: Record<string, unknown>;
}

/**
 * Runs decodeTiff in a worker thread with a heap limit and a timeout, so that a hostile or broken file
 * cannot stall or crash the server. The input is copied; the decoded pages are transferred back.
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
  const { timeoutMs = 5000, maxHeapMb = 512, workerUrl = new URL('./decodeWorker.mjs', import.meta.url) } = options;
  const copy = bytes instanceof Uint8Array ? bytes.slice() : new Uint8Array(bytes.slice(0));

  return new Promise<DecodedTiff>((resolve, reject) => {
    let settled = false;
    const worker = new Worker(workerUrl, {
      workerData: { kind: WORKER_KIND },
      resourceLimits: {
        maxOldGenerationSizeMb: maxHeapMb,
        maxYoungGenerationSizeMb: Math.min(64, Math.max(8, Math.floor(maxHeapMb / 8))),
        stackSizeMb: 4,
      },
    });
    const finish = (fn: () => void): void => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      fn();
      void worker.terminate();
    };
    const timer = setTimeout(() => {
      finish(() => reject(new ImagingError(
        'timeout',
        `Reading the image took longer than ${(timeoutMs / 1000).toFixed(1)} s and was stopped. The file may be damaged or unusually large; try exporting it again.`,
      )));
    }, timeoutMs);

    worker.once('message', (reply: WorkerReply) => {
      finish(() => {
        if (reply.ok && reply.result) resolve(reply.result);
        else reject(new ImagingError(reply.code ?? 'worker_failed', reply.message ?? 'The image could not be read.', reply.details));
      });
    });
    worker.once('error', (err: Error & { code?: string }) => {
      finish(() => {
        if (err.code === 'ERR_WORKER_OUT_OF_MEMORY') {
          reject(new ImagingError(
            'too_large',
            'Reading the image needed more memory than Heightlight allows. The file may be damaged, or its compressed data expands to more than it declares.',
            { cause: err.message },
          ));
        } else {
          reject(new ImagingError('worker_failed', 'The image reader stopped unexpectedly. Try again; if it happens again, export the file again.', { cause: err.message }));
        }
      });
    });
    worker.once('exit', (exitCode) => {
      finish(() => reject(new ImagingError(
        'worker_failed',
        'The image reader stopped before it finished. Try again; if it happens again, export the file again.',
        { exitCode },
      )));
    });
    worker.postMessage({ bytes: copy, limits }, [copy.buffer]);
  });
}
