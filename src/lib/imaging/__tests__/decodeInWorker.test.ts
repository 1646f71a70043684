import { describe, expect, it } from 'vitest';
import { closeDecodeThreads, decodeInWorker, decodeThreadStats } from '../decodeInWorker';
import { ImagingError } from '../errors';
import { writeTiff } from '../writeTiff';
import { setInline } from './tiffBytes';

describe('decodeInWorker (worker_threads sandbox)', () => {
  it('decodes a 2-page int16 stack in a worker and returns the same values and metadata', async () => {
    const pages = [[-5, 0, 5, 1000], [7, 8, 9, -32768]].map((data) => ({ data, width: 2, height: 2 }));
    const file = writeTiff(pages, { bitsPerSample: 16, sampleFormat: 'int', compression: 'lzw', resolution: { x: 1e5, y: 1e5, unit: 'centimetre' } });
    const before = file.slice();
    const out = await decodeInWorker(file);
    expect(out.pages.map((p) => Array.from(p.data))).toEqual([[-5, 0, 5, 1000], [7, 8, 9, -32768]]);
    expect(out.pages[0].data).toBeInstanceOf(Float32Array);
    expect(out.meta.pixelSizeNm).toEqual({ x: 100, y: 100 });
    expect(file).toEqual(before); // the caller's buffer is copied, not transferred
  });

  it('maps a rejected file to an ImagingError with its code', async () => {
    const file = setInline(writeTiff([{ data: [1], width: 1, height: 1 }], { bitsPerSample: 8, sampleFormat: 'uint' }), 259, 7);
    const err = await decodeInWorker(file).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ImagingError);
    expect((err as ImagingError).code).toBe('unsupported_compression');
  });

  it('terminates the worker and reports timeout when the budget runs out', async () => {
    const width = 1024;
    const file = writeTiff([{ data: new Array(width * width).fill(3), width, height: width }], { bitsPerSample: 16, sampleFormat: 'uint', compression: 'deflate' });
    const before = decodeThreadStats();
    // 1 ms cannot cover worker start-up (tens of ms), so this always runs over; a heap limit of its own starts a fresh thread
    const err = await decodeInWorker(file, {}, { timeoutMs: 1, maxHeapMb: 303 }).catch((e: unknown) => e);
    expect((err as ImagingError).code).toBe('timeout');
    expect((err as ImagingError).message).toContain('took longer than 0.0 s');
    // the thread that ran over is stopped at once and never kept for reuse
    const after = decodeThreadStats();
    expect(after.started).toBe(before.started + 1);
    expect(after.live).toBe(before.live);
    expect(after.idle).toBe(before.idle);
  });

  it('maps a worker that runs out of heap to too_large', async () => {
    // 2048 × 2048 float64 (32 MiB) through pako's inflate with a 2 MiB old-generation heap: V8 stops the worker
    const width = 2048;
    const file = writeTiff([{ data: new Float64Array(width * width), width, height: width }], { bitsPerSample: 64, sampleFormat: 'float', compression: 'deflate' });
    const err = await decodeInWorker(file, {}, { maxHeapMb: 2, timeoutMs: 10_000 }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ImagingError);
    expect((err as ImagingError).code).toBe('too_large');
    expect((err as ImagingError).message).toContain('more memory than Heightlight allows');
  });

  describe('thread reuse', () => {
    const small = () => writeTiff([{ data: [1, 2, 3, 4, 5, 6], width: 3, height: 2 }], { bitsPerSample: 16, sampleFormat: 'uint', compression: 'deflate' });
    // 4096 × 4096 deflate takes about 0.4 s to inflate and convert here (measured; 1024² took 26–51 ms, too close to
    // a short timeout on a faster machine): against a 20 ms timeout, a stand-in for a file that hangs
    const slow = () => writeTiff([{ data: new Uint16Array(4096 * 4096).fill(3), width: 4096, height: 4096 }], { bitsPerSample: 16, sampleFormat: 'uint', compression: 'deflate' });
    // 2048 × 2048 float64 through inflate with a 2 MiB heap: V8 stops the thread (as in the test above)
    const oom = () => writeTiff([{ data: new Float64Array(2048 * 2048), width: 2048, height: 2048 }], { bitsPerSample: 64, sampleFormat: 'float', compression: 'deflate' });

    it('answers consecutive files from one thread, each with its own pixels', async () => {
      await closeDecodeThreads();
      const before = decodeThreadStats().started;
      for (let k = 0; k < 5; k++) {
        const file = writeTiff([{ data: [k, k + 1, k + 2], width: 3, height: 1 }], { bitsPerSample: 8, sampleFormat: 'uint' });
        const out = await decodeInWorker(file, {}, { maxHeapMb: 301 });
        expect(Array.from(out.pages[0].data)).toEqual([k, k + 1, k + 2]);
      }
      expect(decodeThreadStats().started - before).toBe(1);
      expect(decodeThreadStats().idle).toBe(1);
    });

    it('a file that runs over its time stops only its own thread; a decode beside it and the next one succeed', async () => {
      await closeDecodeThreads();
      await decodeInWorker(small(), {}, { maxHeapMb: 302 }); // one idle thread of this kind
      const s0 = decodeThreadStats();
      const [hung, beside] = await Promise.allSettled([
        decodeInWorker(slow(), {}, { maxHeapMb: 302, timeoutMs: 20 }),
        decodeInWorker(small(), {}, { maxHeapMb: 302, timeoutMs: 5000 }),
      ]);
      expect(hung.status).toBe('rejected');
      expect(((hung as PromiseRejectedResult).reason as ImagingError).code).toBe('timeout');
      expect(beside.status).toBe('fulfilled');
      expect(Array.from((beside as PromiseFulfilledResult<Awaited<ReturnType<typeof decodeInWorker>>>).value.pages[0].data)).toEqual([1, 2, 3, 4, 5, 6]);
      // two threads were in use (the idle one and one new); only the timed-out one is gone
      expect(decodeThreadStats().started - s0.started).toBe(1);
      expect(decodeThreadStats().live).toBe(1);
      const next = await decodeInWorker(small(), {}, { maxHeapMb: 302 });
      expect(next.pages[0].width).toBe(3);
      expect(decodeThreadStats().started - s0.started).toBe(1); // the survivor answered it
    });

    it('a file that exhausts the heap stops only its own thread; the caller and other threads carry on', async () => {
      await closeDecodeThreads();
      await decodeInWorker(small(), {}, { maxHeapMb: 303 });
      const s0 = decodeThreadStats();
      const [boom, beside] = await Promise.allSettled([
        decodeInWorker(oom(), {}, { maxHeapMb: 2, timeoutMs: 10_000 }),
        decodeInWorker(small(), {}, { maxHeapMb: 303 }),
      ]);
      expect(((boom as PromiseRejectedResult).reason as ImagingError).code).toBe('too_large');
      expect(beside.status).toBe('fulfilled');
      expect(decodeThreadStats().started - s0.started).toBe(1); // the 2 MiB thread; the 303 MiB one was reused
      expect(decodeThreadStats().live).toBe(1); // the out-of-memory thread is gone
      const again = await decodeInWorker(small(), {}, { maxHeapMb: 303 });
      expect(Array.from(again.pages[0].data)).toEqual([1, 2, 3, 4, 5, 6]);
    });

    it('closeDecodeThreads stops idle threads and fails a busy caller with worker_failed', async () => {
      await decodeInWorker(small(), {}, { maxHeapMb: 304 });
      const busy = decodeInWorker(slow(), {}, { maxHeapMb: 304, timeoutMs: 10_000 }).catch((e: unknown) => e);
      await closeDecodeThreads();
      expect(((await busy) as ImagingError).code).toBe('worker_failed');
      expect(decodeThreadStats().live).toBe(0);
    });
  });
});
