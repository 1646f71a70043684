import { describe, expect, it } from 'vitest';
import { decodeInWorker } from '../decodeInWorker';
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
    const t0 = performance.now();
    // 1 ms cannot cover worker start-up (tens of ms), so this always runs over
    const err = await decodeInWorker(file, {}, { timeoutMs: 1 }).catch((e: unknown) => e);
    expect((err as ImagingError).code).toBe('timeout');
    expect((err as ImagingError).message).toContain('took longer than 0.0 s');
    expect(performance.now() - t0).toBeLessThan(1000);
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
});
