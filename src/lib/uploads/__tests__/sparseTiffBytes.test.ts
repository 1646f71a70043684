import { describe, it, expect } from 'vitest';
import { sparseTiffBytes } from '../sparseTiffBytes';
import { inspectTiff, writeTiff } from '../../imaging';
import { baseFiles, mutate } from '../../imaging/__tests__/fuzzCases';

const reader = (file: Uint8Array) => {
  const ranges: [number, number][] = [];
  return { ranges, read: async (s: number, e: number) => { ranges.push([s, e]); return file.slice(s, e); } };
};

describe('sparseTiffBytes', () => {
  it('gives inspectTiff the same answer as the whole file while reading only structure (multi-page, tag data)', async () => {
    const pages = [0, 1, 2].map((k) => ({ data: Uint16Array.from({ length: 300 * 200 }, (_, i) => (i * (k + 3)) % 65536), width: 300, height: 200 }));
    const file = writeTiff(pages, { bitsPerSample: 16, sampleFormat: 'uint', resolution: { x: 1e5, y: 1e5, unit: 'centimetre' }, imageDescription: 'x'.repeat(500), rowsPerStrip: 1 });
    const r = reader(file);
    const sparse = await sparseTiffBytes(file.length, r.read);
    expect(inspectTiff(sparse)).toEqual(inspectTiff(file));
    const fetched = r.ranges.reduce((t, [s, e]) => t + (e - s), 0);
    // 3 × 120 000 bytes of pixels were never read
    expect(fetched).toBeLessThan(file.length / 20);
  });

  it('agrees with inspectTiff on the whole file for mutated files (same result or same error code)', async () => {
    const bases = baseFiles();
    for (let i = 0; i < 300; i++) {
      const { file } = mutate(bases[i % bases.length], 4242 + i);
      const whole = (() => { try { return { ok: inspectTiff(file) }; } catch (e) { return { err: (e as { code?: string }).code }; } })();
      const sparse = await sparseTiffBytes(file.length, reader(file).read);
      const part = (() => { try { return { ok: inspectTiff(sparse) }; } catch (e) { return { err: (e as { code?: string }).code }; } })();
      expect(part, `case ${i}`).toEqual(whole);
    }
  });
});
