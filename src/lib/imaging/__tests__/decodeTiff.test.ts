import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { decodeTiff } from '../decodeTiff';
import { inspectTiff } from '../inspectTiff';
import { lzwEncode, writeTiff, type WriteTiffOptions } from '../writeTiff';
import { entry, setInline, view } from './tiffBytes';

// utif is a second, independent TIFF decoder: it checks our writer without relying on geotiff.
const UTIF = createRequire(import.meta.url)('utif') as {
  decode(buf: ArrayBuffer): Array<Record<string, unknown> & { data: Uint8Array }>;
  decodeImage(buf: ArrayBuffer, ifd: Record<string, unknown>): void;
};

/** Values spanning the full range of each sample type (limits: two's complement / IEEE 754, common practice). */
const CASES: Array<{ name: string; opts: WriteTiffOptions; values: number[] }> = [
  { name: 'uint8', opts: { bitsPerSample: 8, sampleFormat: 'uint' }, values: [0, 1, 127, 128, 254, 255] },
  { name: 'uint16', opts: { bitsPerSample: 16, sampleFormat: 'uint' }, values: [0, 1, 256, 4095, 32768, 65535] },
  { name: 'uint32', opts: { bitsPerSample: 32, sampleFormat: 'uint' }, values: [0, 1, 65536, 1 << 20, 16777216, 123] },
  { name: 'int8', opts: { bitsPerSample: 8, sampleFormat: 'int' }, values: [-128, -1, 0, 1, 100, 127] },
  { name: 'int16', opts: { bitsPerSample: 16, sampleFormat: 'int' }, values: [-32768, -1200, -1, 0, 1500, 32767] },
  { name: 'int32', opts: { bitsPerSample: 32, sampleFormat: 'int' }, values: [-16777216, -70000, -1, 0, 70000, 16777216] },
  { name: 'float32', opts: { bitsPerSample: 32, sampleFormat: 'float' }, values: [-12.5, 0, 0.25, 3.75, 1e-3, 1e6] },
  { name: 'float64', opts: { bitsPerSample: 64, sampleFormat: 'float' }, values: [-12.5, 0, 0.25, 3.75, 0.5, 1e6] },
];

describe('decodeTiff: pixel values written by writeTiff come back exactly', () => {
  for (const c of CASES) {
    it(`${c.name}, 3 × 2 pixels, both byte orders`, async () => {
      for (const byteOrder of ['little', 'big'] as const) {
        const file = writeTiff([{ data: c.values, width: 3, height: 2 }], { ...c.opts, byteOrder });
        const { pages, meta } = await decodeTiff(file);
        expect(meta.bitsPerSample).toBe(c.opts.bitsPerSample);
        expect(meta.sampleFormat).toBe(c.opts.sampleFormat);
        expect(meta.byteOrder).toBe(byteOrder === 'little' ? 'little-endian' : 'big-endian');
        expect(pages).toHaveLength(1);
        expect(pages[0].width).toBe(3);
        expect(pages[0].height).toBe(2);
        // every value is exactly representable in float32 (|int| ≤ 2^24, dyadic fractions; 1e-3 rounded the same way)
        expect(Array.from(pages[0].data)).toEqual(c.values.map((v) => Math.fround(v)));
      }
    });
  }

  it('reads a 2 × 2 big-endian uint16 file assembled byte by byte from TIFF 6.0 section 2', async () => {
    // header MM 00 2A, IFD at 8; 9 entries; pixel data at 8 + 2 + 9·12 + 4 = 122
    const entriesList: Array<[number, number, number]> = [
      [256, 3, 2], [257, 3, 2], [258, 3, 16], [259, 3, 1], [262, 3, 1], [273, 4, 122], [277, 3, 1], [278, 3, 2], [279, 4, 8],
    ];
    const file = new Uint8Array(130);
    const dv = view(file);
    file.set([0x4d, 0x4d, 0x00, 0x2a, 0, 0, 0, 8]);
    dv.setUint16(8, entriesList.length);
    entriesList.forEach(([tag, type, value], i) => {
      const p = 10 + i * 12;
      dv.setUint16(p, tag); dv.setUint16(p + 2, type); dv.setUint32(p + 4, 1);
      if (type === 3) dv.setUint16(p + 8, value); else dv.setUint32(p + 8, value);
    });
    [1, 2, 1000, 65535].forEach((v, i) => dv.setUint16(122 + 2 * i, v));
    const { pages, meta } = await decodeTiff(file);
    expect(meta.compression).toBe('none');
    expect(Array.from(pages[0].data)).toEqual([1, 2, 1000, 65535]);
    expect(meta.pixelSizeNm).toBeNull();
  });

  it('decodes LZW, Deflate and PackBits strips and tiles identically to the uncompressed file', async () => {
    const width = 150;
    const height = 97;
    // smooth ramp plus a pseudo-random term: long runs for PackBits, repeats for LZW, crosses 9→12-bit LZW codes
    const data = Array.from({ length: width * height }, (_, i) => (Math.floor(i / 7) * 13 + ((i * 2654435761) >>> 24)) % 65536);
    for (const compression of ['none', 'lzw', 'deflate', 'packbits'] as const) {
      for (const layout of [{ rowsPerStrip: 16 }, { tileSize: 64 }]) {
        const file = writeTiff([{ data, width, height }], { bitsPerSample: 16, sampleFormat: 'uint', compression, ...layout });
        const { pages, meta } = await decodeTiff(file);
        expect(meta.compression).toBe({ none: 'none', lzw: 'LZW', deflate: 'Deflate', packbits: 'PackBits' }[compression]);
        expect(meta.pages[0].layout).toBe('tileSize' in layout ? 'tiles' : 'strips');
        expect(Array.from(pages[0].data)).toEqual(data);
      }
    }
  });

  it('writes LZW and PackBits that utif (an independent decoder) reads to the same bytes', () => {
    const width = 64;
    const height = 40;
    const data = Array.from({ length: width * height }, (_, i) => (i % 9 === 0 ? 7 : (i * 31) % 251));
    const raw = Uint8Array.from(data);
    for (const compression of ['lzw', 'packbits', 'deflate'] as const) {
      const file = writeTiff([{ data, width, height }], { bitsPerSample: 8, sampleFormat: 'uint', compression, rowsPerStrip: 7 });
      const buf = file.slice().buffer;
      const ifds = UTIF.decode(buf);
      UTIF.decodeImage(buf, ifds[0]);
      expect(Array.from(ifds[0].data.subarray(0, raw.length))).toEqual(Array.from(raw));
    }
  });

  it('returns a multi-page stack as one page per channel, in file order', async () => {
    const pages = [10, 20, 30].map((base) => ({ data: [base, base + 1, base + 2, base + 3], width: 2, height: 2 }));
    const file = writeTiff(pages, { bitsPerSample: 16, sampleFormat: 'uint', compression: 'deflate' });
    const decoded = await decodeTiff(file);
    expect(decoded.meta.pageCount).toBe(3);
    expect(decoded.pages.map((p) => Array.from(p.data))).toEqual([[10, 11, 12, 13], [20, 21, 22, 23], [30, 31, 32, 33]]);
  });

  it('skips pages marked as reduced-resolution previews (NewSubfileType bit 0, TIFF 6.0 section 8)', async () => {
    const file = writeTiff(
      [{ data: [1, 2, 3, 4], width: 2, height: 2 }, { data: [9], width: 1, height: 1 }],
      { bitsPerSample: 8, sampleFormat: 'uint' },
    );
    // turn the second IFD's PlanarConfiguration entry (284) into NewSubfileType (254) = 1
    const copy = file.slice();
    const dv = view(copy);
    const e = entry(copy, 284, 1);
    dv.setUint16(e.at, 254, true);
    dv.setUint16(e.at + 2, 4, true);
    dv.setUint32(e.at + 8, 1, true);
    const decoded = await decodeTiff(copy);
    expect(decoded.pages).toHaveLength(1);
    expect(Array.from(decoded.pages[0].data)).toEqual([1, 2, 3, 4]);
    expect(decoded.meta.warnings.join(' ')).toContain('1 reduced-resolution preview');
  });

  it('does not modify the input bytes', async () => {
    const file = writeTiff([{ data: [5, 6, 7, 8], width: 2, height: 2 }], { bitsPerSample: 16, sampleFormat: 'int', compression: 'lzw' });
    const before = file.slice();
    await decodeTiff(file);
    inspectTiff(file.buffer as ArrayBuffer);
    expect(file).toEqual(before);
  });

  it('accepts a Uint8Array that views part of a larger buffer', async () => {
    const file = writeTiff([{ data: [3, 1, 4, 1], width: 2, height: 2 }], { bitsPerSample: 8, sampleFormat: 'uint' });
    const big = new Uint8Array(file.length + 100);
    big.set(file, 37);
    const { pages } = await decodeTiff(big.subarray(37, 37 + file.length));
    expect(Array.from(pages[0].data)).toEqual([3, 1, 4, 1]);
  });

  it('decodes a file whose RowsPerStrip is larger than the image (TIFF 6.0 section 8: default 2^32 − 1)', async () => {
    const file = setInline(writeTiff([{ data: [1, 2, 3, 4, 5, 6], width: 2, height: 3 }], { bitsPerSample: 8, sampleFormat: 'uint' }), 278, 0xffffffff);
    const { pages } = await decodeTiff(file);
    expect(Array.from(pages[0].data)).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it('rejects LZW codes that were never stored (geotiff 3.0.5 loops forever on them) as corrupt, quickly', async () => {
    // Code widths as TIFF readers grow them (TIFF 6.0 section 13): 9 bits, +1 when the table reaches 2^width − 1.
    // After 3835 literals the table holds 4092 entries; code 4094 was never stored, and 4093 lies past
    // geotiff's table, which made its decoder loop until the process aborted (found by fuzz.test.ts).
    const codes = [256, ...new Array(3835).fill(65), 4094, 65, 4093, 257];
    let bits = '';
    let width = 9;
    let dictLen = 258;
    codes.forEach((c, i) => {
      bits += c.toString(2).padStart(width, '0');
      if (c >= 256 && c <= 257) return;
      if (codes[i - 1] !== 256) dictLen++;
      if (dictLen + 1 >= 2 ** width && width < 12) width++;
    });
    const stream = Uint8Array.from(bits.padEnd(Math.ceil(bits.length / 8) * 8, '0').match(/.{8}/g)!.map((b) => parseInt(b, 2)));
    const width64 = 64;
    const file = writeTiff([{ data: new Array(width64 * 128).fill(65), width: width64, height: 128 }], { bitsPerSample: 8, sampleFormat: 'uint' });
    expect(stream.length).toBeLessThan(width64 * 128);
    const at = view(file).getUint32(entry(file, 273).at + 8, true);
    const bad = setInline(setInline(file, 259, 5), 279, stream.length);
    bad.set(stream, at);
    // a decoder that looped on the bad code would run into the test's time-out instead of answering
    const err = await decodeTiff(bad).catch((e: unknown) => e);
    expect(err).toMatchObject({ code: 'corrupt', message: expect.stringContaining('compressed (LZW) data of image 1 is invalid') });
  });
});

describe('decodeTiff: uncompressed strips are read directly, with the values geotiff gives', () => {
  it('matches geotiff 3.0.5 (the reference decoder) on every sample type, both byte orders, strips of 3 rows over 7', async () => {
    const { fromArrayBuffer } = await import('geotiff');
    for (const c of CASES) {
      for (const byteOrder of ['little', 'big'] as const) {
        const data = Array.from({ length: 5 * 7 }, (_, i) => c.values[i % c.values.length]);
        const file = writeTiff([{ data, width: 5, height: 7 }, { data: data.slice().reverse(), width: 5, height: 7 }], { ...c.opts, byteOrder, rowsPerStrip: 3 });
        const { pages } = await decodeTiff(file);
        const tiff = await fromArrayBuffer(file.slice().buffer);
        for (let p = 0; p < 2; p++) {
          const band = (await (await tiff.getImage(p)).readRasters({ interleave: false }))[0] as ArrayLike<number>;
          expect(Array.from(pages[p].data), `${c.name} ${byteOrder} page ${p + 1}`).toEqual(Array.from(band, (v) => Math.fround(v)));
        }
      }
    }
  });
});
