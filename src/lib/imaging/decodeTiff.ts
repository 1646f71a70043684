/**
 * decodeTiff: every full-resolution page of a TIFF that inspectTiff accepted, decoded to Float32Array (uncompressed
 * strips directly, everything else with geotiff).
 * Runs in the calling thread; files from users go through decodeInWorker, which runs this in a worker thread.
 * LZW: TIFF 6.0 specification (Adobe, 1992), section 13.
 */
import { fromArrayBuffer } from 'geotiff';
import { ImagingError } from './errors';
import { asBytes, corrupt, DEFAULT_LIMITS, FILE_HELP, inspectTiffBlocks, type PageBlocks } from './inspectTiff';
import type { DecodedPage, DecodedTiff, TiffLimits, TiffPageInfo } from './tiffTypes';

/**
 * Dry run of TIFF LZW (TIFF 6.0 section 13) that tracks only string lengths, mirroring how geotiff 3.0.5's
 * decoder reads codes (MSB-first, width grows when the table holds 2^width − 1 entries, missing bits are 0,
 * end of data acts as EndOfInformation). geotiff's decoder loops forever (and then aborts the whole
 * process with an array-size error) on codes it never stored: a code ≥ 4093 (its table size) or a code
 * beyond the next free entry. Found by fuzz.test.ts. This check rejects such streams, and any stream that
 * would expand beyond maxOut bytes, before geotiff sees them. Cost: one pass over the compressed bytes.
 */
function checkLzwStream(data: Uint8Array, maxOut: number, ifdIndex: number): void {
  const nbBits = data.length * 8;
  let pos = 0;
  let width = 9;
  const next = () => {
    if (pos >= nbBits) return 257;
    // 24-bit window: a code of ≤ 12 bits starting at any bit of byte i ends within byte i + 2
    const i = pos >> 3;
    const word = (data[i] << 16) | ((i + 1 < data.length ? data[i + 1] : 0) << 8) | (i + 2 < data.length ? data[i + 2] : 0);
    const code = (word >>> (24 - (pos & 7) - width)) & ((1 << width) - 1);
    pos += width;
    return code;
  };
  const bad = () => corrupt(`the compressed (LZW) data of image ${ifdIndex + 1} is invalid`);
  const lengths = new Uint32Array(4096);
  for (let i = 0; i < 256; i++) lengths[i] = 1;
  let dictLen = 258;
  let oldCode = -1;
  let out = 0;
  let code = next();
  while (code !== 257) {
    if (code === 256) {
      dictLen = 258;
      width = 9;
      code = next();
      while (code === 256) code = next();
      if (code === 257) break;
      if (code > 256) throw bad();
      out += 1;
      oldCode = code;
    } else if (code >= 4093 || code > dictLen) {
      throw bad();
    } else if (code < dictLen) {
      out += lengths[code];
      if (oldCode !== -1) lengths[dictLen++] = lengths[oldCode] + 1;
      oldCode = code;
    } else {
      if (oldCode === -1) throw bad();
      lengths[dictLen] = lengths[oldCode] + 1;
      out += lengths[dictLen++];
      oldCode = code;
    }
    if (out > maxOut) {
      throw corrupt(`the compressed (LZW) data of image ${ifdIndex + 1} expands to more than the image size`);
    }
    if (dictLen + 1 >= 2 ** width) {
      if (width === 12) oldCode = -1;
      else width++;
    }
    code = next();
  }
}

/**
 * An uncompressed, strip-organised page (the common export of both instruments) read straight into Float32Array.
 * Why not geotiff here: it copies every strip through its generic block reader, and on the benchmark field (a 2048²
 * float32 height map and three 1024² 16-bit pages) that took about 0.4 s of a cold run, against a few tens of ms for
 * this loop; it stays the decoder for compressed and tiled pages, and the tests require the same values from both.
 * inspectTiff has already checked that every strip lies in the file and holds its rows. Layout: TIFF 6.0 section 3
 * (strips of RowsPerStrip rows, samples in the file's byte order; one sample per pixel).
 */
function readUncompressedStrips(u8: Uint8Array, page: TiffPageInfo, blocks: PageBlocks, littleEndian: boolean): Float32Array {
  const { width, height, bitsPerSample, sampleFormat } = page;
  const bytesPerSample = bitsPerSample / 8;
  const rowsPerStrip = blocks.maxBytes / (width * bytesPerSample);
  const Samples = SAMPLE_ARRAYS[sampleFormat][bitsPerSample];
  const out = new Float32Array(width * height);
  for (let strip = 0; strip < blocks.offsets.length; strip++) {
    const firstRow = strip * rowsPerStrip;
    const n = Math.min(rowsPerStrip, height - firstRow) * width;
    let bytes = u8.subarray(blocks.offsets[strip], blocks.offsets[strip] + n * bytesPerSample);
    // a typed view needs the machine's byte order and an aligned start; otherwise work on a (swapped) copy
    if (littleEndian !== MACHINE_LITTLE_ENDIAN || bytes.byteOffset % bytesPerSample !== 0) bytes = bytes.slice();
    if (littleEndian !== MACHINE_LITTLE_ENDIAN && bytesPerSample > 1) {
      for (let i = 0; i < bytes.length; i += bytesPerSample) {
        for (let lo = i, hi = i + bytesPerSample - 1; lo < hi; lo++, hi--) {
          const t = bytes[lo];
          bytes[lo] = bytes[hi];
          bytes[hi] = t;
        }
      }
    }
    // set() converts each sample to float32 by rounding to nearest, as Math.fround does
    out.set(new Samples(bytes.buffer as ArrayBuffer, bytes.byteOffset, n), firstRow * width);
  }
  return out;
}

const MACHINE_LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

type SampleArray = Uint8ArrayConstructor | Uint16ArrayConstructor | Uint32ArrayConstructor | Int8ArrayConstructor
  | Int16ArrayConstructor | Int32ArrayConstructor | Float32ArrayConstructor | Float64ArrayConstructor;

const SAMPLE_ARRAYS: Record<TiffPageInfo['sampleFormat'], Record<number, SampleArray>> = {
  uint: { 8: Uint8Array, 16: Uint16Array, 32: Uint32Array },
  int: { 8: Int8Array, 16: Int16Array, 32: Int32Array },
  float: { 32: Float32Array, 64: Float64Array },
};

/** Maps anything geotiff throws on damaged data to an ImagingError. */
export function asImagingError(err: unknown): ImagingError {
  if (err instanceof ImagingError) return err;
  return new ImagingError(
    'corrupt',
    `The image data could not be decoded: the file is probably damaged. ${FILE_HELP}`,
    { cause: err instanceof Error ? err.message : String(err) },
  );
}

/**
 * Decodes every full-resolution page (8/16/32-bit int or uint, 32/64-bit float; none, LZW, Deflate or
 * PackBits compression) to Float32Array with geotiff, after inspectTiff accepted the file. Runs in the
 * calling thread: use decodeInWorker for files from users.
 * @param bytes - the whole file (the buffer is not modified)
 * @param limits - size limits; missing fields take DEFAULT_LIMITS
 * @returns the pages and the metadata
 * @throws ImagingError with the codes of inspectTiff; corrupt when the pixel data cannot be decoded
 */
export async function decodeTiff(bytes: Uint8Array | ArrayBuffer, limits: TiffLimits = DEFAULT_LIMITS): Promise<DecodedTiff> {
  const { meta, blocks } = inspectTiffBlocks(bytes, limits);
  const u8 = asBytes(bytes);
  for (const page of meta.pages) {
    if (page.compression !== 5) continue;
    const { offsets, counts, maxBytes } = blocks[page.ifdIndex];
    for (let i = 0; i < offsets.length; i++) {
      checkLzwStream(u8.subarray(offsets[i], offsets[i] + counts[i]), 2 * maxBytes + 1024, page.ifdIndex);
    }
  }
  const pages: DecodedPage[] = [];
  let tiff: Awaited<ReturnType<typeof fromArrayBuffer>> | undefined;
  try {
    for (const page of meta.pages) {
      if (page.compression === 1 && page.layout === 'strips') {
        pages.push({ data: readUncompressedStrips(u8, page, blocks[page.ifdIndex], meta.byteOrder === 'little-endian'), width: page.width, height: page.height });
        continue;
      }
      // geotiff needs an ArrayBuffer holding exactly the file; copy so the caller's buffer is never shared
      tiff ??= await fromArrayBuffer(u8.slice().buffer);
      const image = await tiff.getImage(page.ifdIndex);
      const rasters = await image.readRasters({ interleave: false });
      const band = rasters[0];
      const n = page.width * page.height;
      if (!band || band.length !== n) throw corrupt(`image ${page.ifdIndex + 1} decoded to the wrong number of pixels`);
      // uint32/int32 above 2^24 lose precision in float32; height and count data stay far below that
      const data = band instanceof Float32Array && band.byteOffset === 0 && band.buffer.byteLength === band.byteLength
        ? band
        : Float32Array.from(band);
      pages.push({ data, width: page.width, height: page.height });
    }
  } catch (err) {
    throw asImagingError(err);
  }
  return { pages, meta };
}
