/**
 * inspectTiff: checks a TIFF file's structure and declared sizes, and reads its metadata, without decoding pixels.
 * No offset in the file is trusted: every one is checked against the file's length before it is read.
 *
 * Facts used (sources):
 * - Header, IFD layout, field types 1-12, tags 254-296 and PackBits/LZW codes: TIFF 6.0 spec
 *   (Adobe, 3 June 1992), sections 2, 8, 9, 13, 14, 15, 19.
 * - Compression 8 = Adobe Deflate, Predictor 3 = floating point: Adobe TIFF Technical Notes
 *   (Photoshop TIFF Technical Notes, 2002). From memory.
 * - BigTIFF header (magic 43, 8-byte offsets, field types 16-18): BigTIFF proposal (libtiff.org). From memory.
 * - OME-XML in ImageDescription of the first IFD; Pixels@PhysicalSizeX/Y, unit default "µm":
 *   OME-TIFF specification and OME schema 2016-06 (docs/references.md §10).
 */
import { ImagingError } from './errors';
import { ifdLayout, readIfdEntry, readOffset, readTiffHeader, readTiffSignature, readU64 } from './tiffStructure';
import type { SampleFormat, TiffLimits, TiffMetadata, TiffPageInfo } from './tiffTypes';

export const DEFAULT_LIMITS: Readonly<Required<TiffLimits>> = Object.freeze({
  maxFileBytes: 1024 * 1024 * 1024,
  maxPixels: 16384 * 16384,
  maxDecodedBytes: 1024 * 1024 * 1024,
  maxPages: 256,
});

// Compression values. 1, 2, 3, 4, 5, 6, 32773: TIFF 6.0 section 3, 8, 10, 11, 13, 22 and 9.
// 7 (JPEG), 8 (Adobe Deflate): Adobe technical notes (from memory). The rest: libtiff's tiff.h (from memory).
const COMPRESSION_NAMES: Record<number, string> = {
  1: 'none', 2: 'CCITT modified Huffman', 3: 'CCITT Group 3 fax', 4: 'CCITT Group 4 fax', 5: 'LZW',
  6: 'old-style JPEG', 7: 'JPEG', 8: 'Deflate', 32773: 'PackBits', 32946: 'Deflate (old code)',
  34712: 'JPEG 2000', 34887: 'LERC', 34925: 'LZMA', 50000: 'Zstandard', 50001: 'WebP',
};
/** Compressions decoded here: lossless ones that geotiff 3 decodes without extra WebAssembly. */
const SUPPORTED_COMPRESSION = new Set([1, 5, 8, 32773, 32946]);

const SAMPLE_FORMATS: Record<number, SampleFormat> = { 1: 'uint', 2: 'int', 3: 'float' };

// OME UnitsLength symbols → nanometres (OME schema 2016-06 UnitsLength; factors are SI definitions).
const NM_PER_UNIT: Record<string, number> = {
  m: 1e9, dm: 1e8, cm: 1e7, mm: 1e6, 'µm': 1e3, 'μm': 1e3, um: 1e3, nm: 1, pm: 1e-3, 'Å': 0.1,
};

export const FILE_HELP = 'Export the image again from the instrument software as a TIFF and upload the new file.';

/** The file's bytes as a Uint8Array view (no copy). */
export function asBytes(bytes: Uint8Array | ArrayBuffer): Uint8Array {
  if (bytes instanceof Uint8Array) return bytes;
  if (bytes instanceof ArrayBuffer) return new Uint8Array(bytes);
  if (ArrayBuffer.isView(bytes)) return new Uint8Array((bytes as ArrayBufferView).buffer, (bytes as ArrayBufferView).byteOffset, (bytes as ArrayBufferView).byteLength);
  throw new TypeError('inspectTiff expects a Uint8Array or an ArrayBuffer holding the file bytes.');
}

function truncated(what: string): ImagingError {
  return new ImagingError(
    'truncated',
    `The file ends before the ${what} it declares: it may be truncated (an interrupted copy or upload). Upload it again.`,
  );
}

export function corrupt(what: string): ImagingError {
  return new ImagingError('corrupt', `The TIFF file is damaged: ${what}. ${FILE_HELP}`);
}

interface Entry { tag: number; type: number; count: number; dataPos: number; unknownType: boolean }
interface Ifd { offset: number; entries: Map<number, Entry> }
interface Walk { le: boolean; big: boolean; dv: DataView; ifds: Ifd[] }

/** Reads the IFD chain and the entries of each IFD without trusting any offset. */
function walkIfds(u8: Uint8Array, limits: Required<TiffLimits>): Walk {
  const len = u8.length;
  if (len < 4) {
    throw new ImagingError('not_tiff', `This file is not a TIFF image (it is only ${len} bytes long). ${FILE_HELP}`);
  }
  const dv = new DataView(u8.buffer, u8.byteOffset, u8.byteLength);
  const signature = readTiffSignature(dv);
  if (!signature) {
    throw new ImagingError('not_tiff', `This file is not a TIFF image: it does not start with the TIFF signature. ${FILE_HELP}`);
  }
  const { littleEndian: le, big } = signature;
  const layout = ifdLayout(big);
  const header = readTiffHeader(dv);
  if (!header) throw truncated('image directory');
  if (!header.offsetSizeOk) throw corrupt('its BigTIFF header declares an unsupported offset size');

  const ifds: Ifd[] = [];
  const seen = new Set<number>();
  let offset = header.firstIfdOffset;
  if (offset === 0) throw corrupt('it contains no image directory');
  while (offset !== 0) {
    if (seen.has(offset)) throw corrupt('its list of images loops back on itself');
    if (ifds.length >= limits.maxPages) {
      throw new ImagingError(
        'too_large',
        `The file holds more than ${limits.maxPages} images (pages); Heightlight accepts at most ${limits.maxPages} per file. Split the stack into smaller files.`,
      );
    }
    seen.add(offset);
    if (offset < layout.headerBytes) throw corrupt('an image directory points into the file header');
    if (offset + layout.countBytes > len) throw truncated('image directory');
    const n = big ? readU64(dv, offset, le) : dv.getUint16(offset, le);
    if (n === 0) throw corrupt('an image directory is empty');
    const entriesEnd = offset + layout.countBytes + n * layout.entryBytes;
    if (entriesEnd + layout.inlineBytes > len) throw truncated('image directory');

    const entries = new Map<number, Entry>();
    for (let i = 0; i < n; i++) {
      const e = readIfdEntry(dv, offset + layout.countBytes + i * layout.entryBytes, le, layout);
      if (!e.knownType) {
        // TIFF 6.0 section 2: readers should skip fields of an unexpected type.
        entries.set(e.tag, { tag: e.tag, type: e.type, count: e.count, dataPos: e.dataPos, unknownType: true });
        continue;
      }
      if (e.byteLength > layout.inlineBytes && e.dataPos + e.byteLength > len) {
        throw e.dataPos >= len ? truncated('tag values') : corrupt(`tag ${e.tag} points outside the file`);
      }
      if (!entries.has(e.tag)) entries.set(e.tag, { tag: e.tag, type: e.type, count: e.count, dataPos: e.dataPos, unknownType: false });
    }
    ifds.push({ offset, entries });
    offset = readOffset(dv, entriesEnd, le, big);
  }
  return { le, big, dv, ifds };
}

/** Numeric values of an entry (rationals as num/den), or undefined when absent. */
function values(ctx: Walk, ifd: Ifd, tag: number): number[] | undefined {
  const e = ifd.entries.get(tag);
  if (!e) return undefined;
  if (e.unknownType) throw corrupt(`tag ${tag} has an unknown value type (${e.type})`);
  const { dv, le } = ctx;
  const out = new Array<number>(e.count);
  for (let i = 0; i < e.count; i++) {
    switch (e.type) {
      case 1: case 2: case 7: out[i] = dv.getUint8(e.dataPos + i); break;
      case 6: out[i] = dv.getInt8(e.dataPos + i); break;
      case 3: out[i] = dv.getUint16(e.dataPos + 2 * i, le); break;
      case 8: out[i] = dv.getInt16(e.dataPos + 2 * i, le); break;
      case 4: case 13: out[i] = dv.getUint32(e.dataPos + 4 * i, le); break;
      case 9: out[i] = dv.getInt32(e.dataPos + 4 * i, le); break;
      case 5: {
        const den = dv.getUint32(e.dataPos + 8 * i + 4, le);
        out[i] = den === 0 ? NaN : dv.getUint32(e.dataPos + 8 * i, le) / den;
        break;
      }
      case 10: {
        const den = dv.getInt32(e.dataPos + 8 * i + 4, le);
        out[i] = den === 0 ? NaN : dv.getInt32(e.dataPos + 8 * i, le) / den;
        break;
      }
      case 11: out[i] = dv.getFloat32(e.dataPos + 4 * i, le); break;
      case 12: out[i] = dv.getFloat64(e.dataPos + 8 * i, le); break;
      default: out[i] = Number(dv.getBigUint64(e.dataPos + 8 * i, le));
    }
  }
  return out;
}

function single(ctx: Walk, ifd: Ifd, tag: number): number | undefined;
function single(ctx: Walk, ifd: Ifd, tag: number, fallback: number): number;
function single(ctx: Walk, ifd: Ifd, tag: number, fallback?: number): number | undefined {
  const v = values(ctx, ifd, tag);
  if (v === undefined || v.length === 0) return fallback;
  return v[0];
}

function text(ctx: Walk, ifd: Ifd, tag: number): string | null {
  const e = ifd.entries.get(tag);
  if (!e || e.unknownType || (e.type !== 2 && e.type !== 7 && e.type !== 1)) return null;
  const raw = new Uint8Array(ctx.dv.buffer, ctx.dv.byteOffset + e.dataPos, e.count);
  const end = raw.indexOf(0);
  // OME-TIFF stores UTF-8 in this ASCII field (OME-TIFF specification).
  return new TextDecoder('utf-8').decode(end === -1 ? raw : raw.subarray(0, end));
}

/** Where each page's pixel blocks are, for decodeTiff's checks. */
export interface PageBlocks { offsets: number[]; counts: number[]; maxBytes: number }

/** Validates one image directory and returns its page description. */
function describePage(ctx: Walk, ifd: Ifd, index: number, limits: Required<TiffLimits>, fileLength: number): { page: TiffPageInfo; blocks: PageBlocks } {
  const width = single(ctx, ifd, 256, NaN);
  const height = single(ctx, ifd, 257, NaN);
  if (!Number.isInteger(width) || !Number.isInteger(height) || width <= 0 || height <= 0) {
    throw corrupt(`image ${index + 1} has no valid width and height`);
  }
  // limits first, before anything proportional to the image size is read or allocated
  if (width * height > limits.maxPixels) {
    throw new ImagingError(
      'too_large',
      `Image ${index + 1} is ${width} × ${height} pixels, more than the ${limits.maxPixels.toLocaleString('en')} pixels Heightlight accepts per image. Crop or bin it before uploading.`,
      { width, height, maxPixels: limits.maxPixels },
    );
  }
  const samplesPerPixel = single(ctx, ifd, 277, 1);
  const photometric = single(ctx, ifd, 262, 1);
  if (samplesPerPixel !== 1 || photometric === 2 || photometric === 3 || photometric > 4) {
    const kind = photometric === 3 ? 'a palette (indexed colour) image' : `${samplesPerPixel} values per pixel (for example colour RGB)`;
    throw new ImagingError(
      'bad_sample_format',
      `Image ${index + 1} stores ${kind}. Heightlight needs one greyscale value per pixel: save each channel as a greyscale page or file.`,
    );
  }
  const bitsList = values(ctx, ifd, 258) ?? [1];
  const bitsPerSample = bitsList[0];
  const formatCode = single(ctx, ifd, 339, 1);
  const sampleFormat = SAMPLE_FORMATS[formatCode];
  const okBits = sampleFormat === 'float' ? bitsPerSample === 32 || bitsPerSample === 64 : [8, 16, 32].includes(bitsPerSample);
  if (!sampleFormat || !okBits) {
    const what = sampleFormat ? `${bitsPerSample}-bit ${sampleFormat === 'uint' ? 'unsigned integer' : sampleFormat === 'int' ? 'signed integer' : 'floating-point'}` : `sample format code ${formatCode}`;
    throw new ImagingError(
      'bad_sample_format',
      `Image ${index + 1} stores pixels as ${what} values, which Heightlight cannot read. Supported: 8, 16 or 32-bit integers (signed or unsigned) and 32 or 64-bit floating point.`,
    );
  }
  const compression = single(ctx, ifd, 259, 1);
  if (!SUPPORTED_COMPRESSION.has(compression)) {
    const name = COMPRESSION_NAMES[compression];
    throw new ImagingError(
      'unsupported_compression',
      `Image ${index + 1} uses ${name ? `${name} compression` : `an unknown compression (code ${compression})`}, which Heightlight cannot read. Save it again uncompressed or with LZW or Deflate compression.`,
      { compression },
    );
  }
  const predictor = single(ctx, ifd, 317, 1);
  if (predictor !== 1 && predictor !== 2 && predictor !== 3) {
    throw new ImagingError(
      'unsupported_compression',
      `Image ${index + 1} uses an unknown prediction step (Predictor ${predictor}). Save it again uncompressed or with plain LZW or Deflate compression.`,
    );
  }
  const bytesPerSample = bitsPerSample / 8;

  // strip or tile layout: every block must lie inside the file
  const tiled = ifd.entries.has(322) || ifd.entries.has(324);
  let blockW: number; let blockH: number; let nBlocks: number; let offsets: number[] | undefined; let counts: number[] | undefined;
  if (tiled) {
    blockW = single(ctx, ifd, 322, NaN);
    blockH = single(ctx, ifd, 323, NaN);
    if (!Number.isInteger(blockW) || !Number.isInteger(blockH) || blockW <= 0 || blockH <= 0 || blockW * blockH > limits.maxPixels) {
      throw corrupt(`image ${index + 1} declares an invalid tile size`);
    }
    nBlocks = Math.ceil(width / blockW) * Math.ceil(height / blockH);
    offsets = values(ctx, ifd, 324);
    counts = values(ctx, ifd, 325);
  } else {
    const rowsPerStrip = single(ctx, ifd, 278, 2 ** 32 - 1);
    if (!Number.isInteger(rowsPerStrip) || rowsPerStrip <= 0) throw corrupt(`image ${index + 1} declares 0 rows per strip`);
    blockW = width;
    blockH = Math.min(rowsPerStrip, height);
    nBlocks = Math.ceil(height / blockH);
    offsets = values(ctx, ifd, 273);
    counts = values(ctx, ifd, 279);
  }
  if (!offsets || !counts) throw corrupt(`image ${index + 1} does not say where its pixel data is stored`);
  if (offsets.length < nBlocks || counts.length < nBlocks) {
    throw corrupt(`image ${index + 1} lists ${Math.min(offsets.length, counts.length)} pixel blocks but needs ${nBlocks}`);
  }
  for (let i = 0; i < nBlocks; i++) {
    if (!(offsets[i] >= 0) || !(counts[i] >= 0)) throw corrupt(`image ${index + 1} has an invalid pixel block position`);
    if (offsets[i] + counts[i] > fileLength) throw truncated('image data');
    if (compression === 1) {
      const rows = tiled ? blockH : Math.min(blockH, height - i * blockH);
      if (counts[i] < rows * blockW * bytesPerSample) {
        throw corrupt(`image ${index + 1} stores fewer pixel bytes than its size needs`);
      }
    } else if (counts[i] === 0) {
      throw corrupt(`image ${index + 1} has an empty compressed pixel block`);
    }
  }

  if (compression !== 1) {
    // A header can claim any size while its compressed data is a few bytes, which would make the decoder
    // allocate the claimed size. No valid stream expands beyond: Deflate 1032:1 (zlib technical notes,
    // from memory), TIFF LZW about 1400:1 (3836 codes of ≤ 12 bits yield ≤ 7.4 MB per table; our
    // derivation), PackBits 64:1 (2 bytes → 128 bytes, TIFF 6.0 section 9). Ratios rounded up.
    const maxRatio = compression === 32773 ? 64 : 2048;
    let compressedBytes = 0;
    for (let i = 0; i < nBlocks; i++) compressedBytes += counts[i];
    const declaredBytes = nBlocks * blockW * blockH * bytesPerSample;
    if (declaredBytes > compressedBytes * maxRatio + 65536) {
      throw corrupt(`image ${index + 1} declares ${width} × ${height} pixels, more than its ${compressedBytes} bytes of compressed data can hold`);
    }
  }

  const subfileType = single(ctx, ifd, 254, 0);
  const page: TiffPageInfo = {
    ifdIndex: index,
    width,
    height,
    bitsPerSample,
    sampleFormat,
    samplesPerPixel,
    compression,
    compressionName: COMPRESSION_NAMES[compression],
    layout: tiled ? 'tiles' : 'strips',
    // NewSubfileType bit 0: reduced-resolution version of another image (TIFF 6.0 section 8)
    reducedResolution: (subfileType & 1) === 1,
  };
  const blocks = { offsets: offsets.slice(0, nBlocks), counts: counts.slice(0, nBlocks), maxBytes: blockW * blockH * bytesPerSample };
  return { page, blocks };
}

function decodeXmlEntities(s: string): string {
  return s
    .replace(/&#x([0-9a-f]+);/gi, (_, h) => String.fromCodePoint(parseInt(h, 16)))
    .replace(/&#(\d+);/g, (_, d) => String.fromCodePoint(parseInt(d, 10)))
    .replace(/&quot;/g, '"').replace(/&apos;/g, "'").replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&amp;/g, '&');
}

function xmlAttr(tag: string, name: string): string | undefined {
  const m = new RegExp(`\\s${name}\\s*=\\s*(?:"([^"]*)"|'([^']*)')`).exec(tag);
  return m ? decodeXmlEntities(m[1] ?? m[2]) : undefined;
}

/** Pixel size from OME-XML Pixels@PhysicalSizeX/Y; undefined when the description is not OME-XML. */
function pixelSizeFromOme(description: string | null, warnings: string[]): { x: number; y: number } | null | undefined {
  if (!description || !/<(?:\w+:)?OME[\s>]/.test(description)) return undefined;
  const pixels = /<(?:\w+:)?Pixels\b[^>]*>/.exec(description);
  if (!pixels) return undefined;
  const axis = (a: 'X' | 'Y'): number | null | undefined => {
    const raw = xmlAttr(pixels[0], `PhysicalSize${a}`);
    if (raw === undefined) return undefined;
    const value = Number(raw);
    // OME schema: PositiveFloat, unit attribute defaults to "µm"
    const unit = xmlAttr(pixels[0], `PhysicalSize${a}Unit`) ?? 'µm';
    const factor = NM_PER_UNIT[unit.trim()];
    if (!(value > 0) || !Number.isFinite(value)) {
      warnings.push(`The OME-XML pixel size ${a} ("${raw}") is not a positive number; it was ignored.`);
      return null;
    }
    if (factor === undefined) {
      warnings.push(`The OME-XML pixel size unit "${unit}" is not a length Heightlight converts; the pixel size was ignored.`);
      return null;
    }
    return value * factor;
  };
  const x = axis('X');
  const y = axis('Y');
  if (x === undefined && y === undefined) return undefined;
  if (x == null || y == null) {
    if (x != null || y != null) warnings.push('The OME-XML gives the pixel size along only one axis; it was ignored.');
    return null;
  }
  return { x, y };
}

/**
 * Emission wavelength (nm) of each Channel of the first OME-XML Pixels, in document order (null where a Channel
 * states none or an unusable one); [] when the description is not OME-XML or has no Channel. OME schema 2016-06:
 * Channel@EmissionWavelength is a PositiveFloat, its unit attribute EmissionWavelengthUnit defaults to "nm".
 */
function channelEmissionFromOme(description: string | null, warnings: string[]): (number | null)[] {
  if (!description || !/<(?:\w+:)?OME[\s>]/.test(description)) return [];
  const start = description.search(/<(?:\w+:)?Pixels\b/);
  if (start < 0) return [];
  const end = description.slice(start).search(/<\/(?:\w+:)?Pixels\s*>/);
  const pixels = end < 0 ? description.slice(start) : description.slice(start, start + end);
  const channels = pixels.match(/<(?:\w+:)?Channel\b[^>]*>/g) ?? [];
  return channels.map((tag, i) => {
    const raw = xmlAttr(tag, 'EmissionWavelength');
    if (raw === undefined) return null;
    const value = Number(raw);
    const unit = (xmlAttr(tag, 'EmissionWavelengthUnit') ?? 'nm').trim();
    const factor = NM_PER_UNIT[unit];
    if (!(value > 0) || !Number.isFinite(value)) {
      warnings.push(`The OME-XML emission wavelength of channel ${i + 1} ("${raw}") is not a positive number; it was ignored.`);
      return null;
    }
    if (factor === undefined) {
      warnings.push(`The OME-XML emission wavelength unit "${unit}" of channel ${i + 1} is not a length Heightlight converts; it was ignored.`);
      return null;
    }
    return value * factor;
  });
}

/** Pixel size from XResolution/YResolution/ResolutionUnit (TIFF 6.0 section 8). */
function pixelSizeFromResolution(ctx: Walk, ifd: Ifd, warnings: string[]): { x: number; y: number } | null {
  const xRes = single(ctx, ifd, 282);
  const yRes = single(ctx, ifd, 283);
  if (xRes === undefined && yRes === undefined) return null;
  const unit = single(ctx, ifd, 296, 2); // default 2 = inch
  if (unit === 1) return null; // 1 = no absolute unit
  if (unit !== 2 && unit !== 3) {
    warnings.push(`The resolution unit code ${unit} is not defined by TIFF 6.0; the pixel size was ignored.`);
    return null;
  }
  const nmPerUnit = unit === 2 ? 2.54e7 : 1e7; // 1 inch = 25.4 mm; 1 cm = 10^7 nm
  const xs = xRes ?? yRes ?? NaN;
  const ys = yRes ?? xRes ?? NaN;
  if (!(xs > 0) || !(ys > 0) || !Number.isFinite(xs) || !Number.isFinite(ys)) {
    warnings.push('The resolution tags are zero or invalid; the pixel size was ignored.');
    return null;
  }
  if (unit === 2 && [72, 96, 300].includes(xs)) {
    // common practice: image programs write 72/96/300 pixels per inch when nothing was calibrated
    warnings.push(`The resolution is ${xs} pixels per inch, a common default of image programs; check that the pixel size is real.`);
  }
  return { x: nmPerUnit / xs, y: nmPerUnit / ys };
}

/**
 * Checks the signature, walks the IFD chain defensively and reads the metadata, without decoding pixels.
 * Declared sizes are compared with `limits` before anything proportional to them is allocated.
 * @param bytes - the whole file (the buffer is not modified)
 * @param limits - size limits; missing fields take DEFAULT_LIMITS
 * @returns the file's metadata, pixel size in nm
 * @throws ImagingError not_tiff, truncated, corrupt, unsupported_compression, bad_sample_format, too_large
 * @see TIFF 6.0 specification (Adobe, 1992); OME-TIFF specification
 */
export function inspectTiff(bytes: Uint8Array | ArrayBuffer, limits: TiffLimits = DEFAULT_LIMITS): TiffMetadata {
  return inspectTiffBlocks(bytes, limits).meta;
}

/** inspectTiff, plus where each page's pixel blocks lie (indexed by IFD), for decodeTiff. */
export function inspectTiffBlocks(bytes: Uint8Array | ArrayBuffer, limits: TiffLimits): { meta: TiffMetadata; blocks: PageBlocks[] } {
  const lim = { ...DEFAULT_LIMITS, ...limits };
  const u8 = asBytes(bytes);
  if (u8.length > lim.maxFileBytes) {
    throw new ImagingError(
      'too_large',
      `The file is ${(u8.length / 1048576).toFixed(0)} MB; Heightlight accepts files up to ${(lim.maxFileBytes / 1048576).toFixed(0)} MB.`,
    );
  }
  const ctx = walkIfds(u8, lim);
  const warnings = [];
  const described = ctx.ifds.map((ifd, i) => describePage(ctx, ifd, i, lim, u8.length));
  const all = described.map((d) => d.page);
  const pages = all.filter((p) => !p.reducedResolution);
  if (pages.length === 0) throw corrupt('it only holds reduced-resolution previews');
  if (pages.length < all.length) {
    warnings.push(`${all.length - pages.length} reduced-resolution preview image(s) were skipped.`);
  }
  // peak memory: geotiff's typed raster plus our Float32Array copy of each page
  const decodedBytes = pages.reduce((s, p) => s + p.width * p.height * (p.bitsPerSample / 8 + 4), 0);
  if (decodedBytes > lim.maxDecodedBytes) {
    throw new ImagingError(
      'too_large',
      `Decoding this file would need ${(decodedBytes / 1048576).toFixed(0)} MB of memory; Heightlight allows ${(lim.maxDecodedBytes / 1048576).toFixed(0)} MB. Upload fewer or smaller images per file.`,
      { decodedBytes, maxDecodedBytes: lim.maxDecodedBytes },
    );
  }
  const first = ctx.ifds[pages[0].ifdIndex];
  const imageDescription = text(ctx, ctx.ifds[0], 270);
  let pixelSizeNm = pixelSizeFromOme(imageDescription, warnings);
  let pixelSizeSource: TiffMetadata['pixelSizeSource'] = pixelSizeNm ? 'ome-xml' : null;
  if (pixelSizeNm === undefined || pixelSizeNm === null) {
    pixelSizeNm = pixelSizeFromResolution(ctx, first, warnings);
    pixelSizeSource = pixelSizeNm ? 'resolution-tags' : null;
  }
  const channelEmissionNm = channelEmissionFromOme(imageDescription, warnings);
  const p0 = pages[0];
  const meta: TiffMetadata = {
    byteOrder: ctx.le ? 'little-endian' : 'big-endian',
    bigTiff: ctx.big,
    width: p0.width,
    height: p0.height,
    bitsPerSample: p0.bitsPerSample,
    sampleFormat: p0.sampleFormat,
    samplesPerPixel: p0.samplesPerPixel,
    compression: p0.compressionName,
    pageCount: pages.length,
    pages,
    pixelSizeNm,
    pixelSizeSource,
    imageDescription,
    channelEmissionNm,
    decodedBytes,
    warnings,
  };
  return { meta, blocks: described.map((d) => d.blocks) };
}

