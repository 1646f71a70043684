// A small baseline TIFF writer for tests and demo data.
//
// Why our own: geotiff 3.0.5's writeArrayBuffer writes a single image only, always adds GeoTIFF keys,
// keeps the directory in a fixed 1000-byte area (a long OME-XML description overflows it), writes
// Int8/Int16/Int32 pixels as zeros (its encoder handles only Uint8/16/32 and Float32/64 arrays) and
// cannot compress. utif's encoder writes 8-bit RGBA only. We need multi-page stacks, signed and float
// samples, resolution tags, ImageDescription and compression, so the file layout is written here.
import { deflateSync } from 'node:zlib';

/** One greyscale page to write, row-major. */
export interface TiffPageInput {
  /** width × height sample values, converted to the file's sample type. */
  data: ArrayLike<number>;
  width: number;
  height: number;
}

export interface WriteTiffOptions {
  /** Bits per sample: 8, 16 or 32 for integers, 32 or 64 for floats. */
  bitsPerSample: 8 | 16 | 32 | 64;
  /** SampleFormat: 'uint' (1), 'int' (2) or 'float' (3). */
  sampleFormat: 'uint' | 'int' | 'float';
  /** XResolution/YResolution in pixels per unit, with ResolutionUnit. @default undefined (tags not written) */
  resolution?: { x: number; y: number; unit: 'none' | 'inch' | 'centimetre' };
  /** ImageDescription of the first page (UTF-8, e.g. OME-XML). @default undefined */
  imageDescription?: string;
  /** Compression of every strip or tile. @default 'none' */
  compression?: 'none' | 'lzw' | 'deflate' | 'packbits';
  /** Byte order: 'II' little-endian or 'MM' big-endian. @default 'little' */
  byteOrder?: 'little' | 'big';
  /** Rows per strip (ignored when tileSize is set). @default whole image in one strip */
  rowsPerStrip?: number;
  /** Write square tiles of this size (a multiple of 16, TIFF 6.0 section 15) instead of strips. @default undefined */
  tileSize?: number;
}

// Tag numbers and type codes: TIFF 6.0 spec, sections 2 and 8 (baseline), 15 (tiles), 19 (SampleFormat).
const SHORT = 3;
const LONG = 4;
const RATIONAL = 5;
const ASCII = 2;
const COMPRESSION_CODE = { none: 1, lzw: 5, deflate: 8, packbits: 32773 } as const;
const RESOLUTION_UNIT = { none: 1, inch: 2, centimetre: 3 } as const;
const SAMPLE_FORMAT_CODE = { uint: 1, int: 2, float: 3 } as const;

interface Entry {
  tag: number;
  type: number;
  values: number[] | Uint8Array;
}

/**
 * Writes greyscale pages as one baseline TIFF file (one IFD per page, one sample per pixel).
 * @param pages - the pages, in order; each page's data has width × height values
 * @param options - sample type, resolution, description, compression and layout
 * @returns the file bytes
 * @throws RangeError when a value does not fit the sample type or the sizes disagree
 * @see TIFF 6.0 specification (Adobe, 3 June 1992)
 */
export function writeTiff(pages: TiffPageInput[], options: WriteTiffOptions): Uint8Array {
  const {
    bitsPerSample, sampleFormat, resolution, imageDescription, compression = 'none', byteOrder = 'little',
    rowsPerStrip, tileSize,
  } = options;
  if (pages.length === 0) throw new RangeError('writeTiff needs at least one page');
  const okBits = sampleFormat === 'float' ? bitsPerSample === 32 || bitsPerSample === 64 : bitsPerSample !== 64;
  if (!okBits) throw new RangeError(`writeTiff cannot write ${bitsPerSample}-bit ${sampleFormat} samples`);
  if (tileSize !== undefined && (tileSize <= 0 || tileSize % 16 !== 0)) {
    throw new RangeError(`tileSize must be a positive multiple of 16 (TIFF 6.0 section 15), got ${tileSize}`);
  }
  const le = byteOrder === 'little';
  const bytesPerSample = bitsPerSample / 8;

  const chunks: Uint8Array[] = [];
  let pos = 0;
  const push = (chunk: Uint8Array): number => {
    // TIFF 6.0 section 2: values and IFDs begin on a word boundary
    if (pos % 2 === 1) { chunks.push(new Uint8Array(1)); pos += 1; }
    const at = pos;
    chunks.push(chunk);
    pos += chunk.length;
    return at;
  };
  const header = new Uint8Array(8);
  const hv = new DataView(header.buffer);
  header[0] = header[1] = le ? 0x49 : 0x4d;
  hv.setUint16(2, 42, le);
  push(header);

  let previousNextPointer = 4; // where the offset of the next IFD must be written
  const patches: Array<{ at: number; value: number }> = [];

  pages.forEach((page, pageIndex) => {
    const { width, height, data } = page;
    if (!Number.isInteger(width) || !Number.isInteger(height) || width <= 0 || height <= 0) {
      throw new RangeError(`page ${pageIndex} has an invalid size ${width} × ${height}`);
    }
    if (data.length !== width * height) {
      throw new RangeError(`page ${pageIndex} has ${data.length} values, expected ${width} × ${height}`);
    }
    // blocks: strips of rowsPerStrip rows, or square tiles padded at the edges (section 15)
    const blockW = tileSize ?? width;
    const blockH = tileSize ?? Math.min(rowsPerStrip ?? height, height);
    const cols = Math.ceil(width / blockW);
    const rows = Math.ceil(height / blockH);
    const offsets: number[] = [];
    const counts: number[] = [];
    for (let by = 0; by < rows; by++) {
      for (let bx = 0; bx < cols; bx++) {
        const h = tileSize ? blockH : Math.min(blockH, height - by * blockH);
        const raw = new Uint8Array(blockW * h * bytesPerSample);
        const view = new DataView(raw.buffer);
        for (let y = 0; y < h; y++) {
          const sy = by * blockH + y;
          if (sy >= height) break;
          for (let x = 0; x < blockW; x++) {
            const sx = bx * blockW + x;
            if (sx >= width) break;
            writeSample(view, (y * blockW + x) * bytesPerSample, data[sy * width + sx], sampleFormat, bitsPerSample, le);
          }
        }
        const packed = compress(raw, compression, blockW * bytesPerSample);
        offsets.push(push(packed));
        counts.push(packed.length);
      }
    }

    const entries: Entry[] = [
      { tag: 256, type: LONG, values: [width] },
      { tag: 257, type: LONG, values: [height] },
      { tag: 258, type: SHORT, values: [bitsPerSample] },
      { tag: 259, type: SHORT, values: [COMPRESSION_CODE[compression]] },
      { tag: 262, type: SHORT, values: [1] }, // BlackIsZero
      { tag: 277, type: SHORT, values: [1] },
      { tag: 284, type: SHORT, values: [1] },
      { tag: 339, type: SHORT, values: [SAMPLE_FORMAT_CODE[sampleFormat]] },
    ];
    if (tileSize) {
      entries.push(
        { tag: 322, type: LONG, values: [tileSize] },
        { tag: 323, type: LONG, values: [tileSize] },
        { tag: 324, type: LONG, values: offsets },
        { tag: 325, type: LONG, values: counts },
      );
    } else {
      entries.push(
        { tag: 273, type: LONG, values: offsets },
        { tag: 278, type: LONG, values: [blockH] },
        { tag: 279, type: LONG, values: counts },
      );
    }
    if (pageIndex === 0 && imageDescription !== undefined) {
      const textBytes = new TextEncoder().encode(imageDescription);
      const z = new Uint8Array(textBytes.length + 1); // NUL-terminated (section 2, ASCII)
      z.set(textBytes);
      entries.push({ tag: 270, type: ASCII, values: z });
    }
    if (resolution) {
      entries.push(
        { tag: 282, type: RATIONAL, values: toRational(resolution.x) },
        { tag: 283, type: RATIONAL, values: toRational(resolution.y) },
        { tag: 296, type: SHORT, values: [RESOLUTION_UNIT[resolution.unit]] },
      );
    }
    entries.sort((a, b) => a.tag - b.tag); // section 2: entries sorted by tag

    // IFD, then the values that do not fit in 4 bytes
    const ifdSize = 2 + entries.length * 12 + 4;
    if (pos % 2 === 1) { chunks.push(new Uint8Array(1)); pos += 1; }
    const ifdAt = pos;
    const ifd = new Uint8Array(ifdSize);
    const iv = new DataView(ifd.buffer);
    iv.setUint16(0, entries.length, le);
    let extraAt = ifdAt + ifdSize;
    const extras: Uint8Array[] = [];
    entries.forEach((e, i) => {
      const p = 2 + i * 12;
      const bytes = encodeValues(e, le);
      iv.setUint16(p, e.tag, le);
      iv.setUint16(p + 2, e.type, le);
      iv.setUint32(p + 4, e.type === RATIONAL ? e.values.length / 2 : e.values.length, le);
      if (bytes.length <= 4) {
        ifd.set(bytes, p + 8);
      } else {
        if (extraAt % 2 === 1) { extras.push(new Uint8Array(1)); extraAt += 1; }
        iv.setUint32(p + 8, extraAt, le);
        extras.push(bytes);
        extraAt += bytes.length;
      }
    });
    patches.push({ at: previousNextPointer, value: ifdAt });
    previousNextPointer = ifdAt + ifdSize - 4;
    push(ifd);
    for (const x of extras) { chunks.push(x); pos += x.length; }
  });

  const out = new Uint8Array(pos);
  let at = 0;
  for (const c of chunks) { out.set(c, at); at += c.length; }
  const ov = new DataView(out.buffer);
  for (const p of patches) ov.setUint32(p.at, p.value, le);
  return out;
}

function writeSample(view: DataView, at: number, v: number, format: 'uint' | 'int' | 'float', bits: number, le: boolean): void {
  if (format === 'float') {
    if (bits === 32) view.setFloat32(at, v, le); else view.setFloat64(at, v, le);
    return;
  }
  const min = format === 'int' ? -(2 ** (bits - 1)) : 0;
  const max = format === 'int' ? 2 ** (bits - 1) - 1 : 2 ** bits - 1;
  if (!Number.isInteger(v) || v < min || v > max) {
    throw new RangeError(`value ${v} does not fit a ${bits}-bit ${format === 'int' ? 'signed' : 'unsigned'} integer`);
  }
  if (bits === 8) { if (format === 'int') view.setInt8(at, v); else view.setUint8(at, v); }
  else if (bits === 16) { if (format === 'int') view.setInt16(at, v, le); else view.setUint16(at, v, le); }
  else if (format === 'int') view.setInt32(at, v, le); else view.setUint32(at, v, le);
}

/** RATIONAL as [numerator, denominator] with the finest power-of-ten denominator that fits 32 bits. */
function toRational(v: number): number[] {
  if (!(v >= 0) || !Number.isFinite(v)) throw new RangeError(`resolution must be a finite number ≥ 0, got ${v}`);
  let den = 1_000_000;
  while (den > 1 && v * den > 0xffffffff) den /= 10;
  const num = Math.round(v * den);
  if (num > 0xffffffff) throw new RangeError(`resolution ${v} is too large for a TIFF RATIONAL`);
  return [num, den];
}

function encodeValues(e: Entry, le: boolean): Uint8Array {
  if (e.values instanceof Uint8Array) return e.values;
  const size = e.type === SHORT ? 2 : 4;
  const out = new Uint8Array(e.values.length * size);
  const v = new DataView(out.buffer);
  e.values.forEach((x, i) => { if (size === 2) v.setUint16(i * 2, x, le); else v.setUint32(i * 4, x, le); });
  return out;
}

function compress(raw: Uint8Array, method: NonNullable<WriteTiffOptions['compression']>, rowBytes: number): Uint8Array {
  if (method === 'none') return raw;
  // Compression 8 is the zlib stream (RFC 1950), as in the Adobe technical note (from memory)
  if (method === 'deflate') return new Uint8Array(deflateSync(raw));
  if (method === 'packbits') return packBits(raw, rowBytes);
  return lzwEncode(raw);
}

/**
 * PackBits (TIFF 6.0 section 9): header n ≥ 0 → n + 1 literal bytes; −127 ≤ n ≤ −1 → next byte repeated
 * 1 − n times. Each row is packed separately, as the section requires.
 */
export function packBits(raw: Uint8Array, rowBytes: number): Uint8Array {
  const out: number[] = [];
  for (let rowStart = 0; rowStart < raw.length; rowStart += rowBytes) {
    const end = Math.min(rowStart + rowBytes, raw.length);
    let i = rowStart;
    while (i < end) {
      let run = 1;
      while (i + run < end && run < 128 && raw[i + run] === raw[i]) run++;
      if (run >= 2) {
        out.push(257 - run, raw[i]); // (1 − run) as a signed byte
        i += run;
        continue;
      }
      const start = i;
      while (i < end && i - start < 128 && !(i + 1 < end && raw[i + 1] === raw[i])) i++;
      if (i === start) i++;
      out.push(i - start - 1);
      for (let k = start; k < i; k++) out.push(raw[k]);
    }
  }
  return Uint8Array.from(out);
}

/**
 * TIFF LZW (TIFF 6.0 section 13): codes MSB-first, 9 to 12 bits, ClearCode 256, EndOfInformation 257.
 * The code width grows one code early, as TIFF readers expect: when the next free code reaches 2^width
 * after adding an entry (the decoder, one entry behind, then switches at 2^width − 1). A ClearCode is
 * written before the table would pass 4094 entries.
 */
export function lzwEncode(input: Uint8Array): Uint8Array {
  const out: number[] = [];
  let acc = 0;
  let accBits = 0;
  const write = (code: number, width: number): void => {
    acc = (acc << width) | code;
    accBits += width;
    while (accBits >= 8) {
      out.push((acc >>> (accBits - 8)) & 0xff);
      accBits -= 8;
    }
    acc &= (1 << accBits) - 1;
  };
  let width = 9;
  let next = 258;
  let dict = new Map<number, number>();
  const afterAdd = (): void => {
    if (next === 4094) {
      write(256, width);
      dict = new Map();
      next = 258;
      width = 9;
    } else if (next >= 1 << width) {
      width++;
    }
  };
  write(256, width);
  if (input.length > 0) {
    let w = input[0];
    for (let i = 1; i < input.length; i++) {
      const key = w * 256 + input[i];
      const hit = dict.get(key);
      if (hit !== undefined) { w = hit; continue; }
      write(w, width);
      dict.set(key, next++);
      afterAdd();
      w = input[i];
    }
    write(w, width);
    next++; // the decoder adds an entry after this code too, so the width may grow before EOI
    afterAdd();
  }
  write(257, width);
  if (accBits > 0) out.push((acc << (8 - accBits)) & 0xff);
  return Uint8Array.from(out);
}
