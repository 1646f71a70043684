// TIFF inspection and decoding for Heightlight, plus the entry point of the decoding worker.
//
// Why plain JavaScript in one self-contained file: the sandbox (decodeInWorker.ts) starts this file
// in a worker_threads Worker. A worker runs plain Node, without the TypeScript loader that vitest or
// tsx provide, and after bundling the file is copied as a single asset, so it must not import other
// project files. Keeping inspectTiff/decodeTiff here lets the in-process path and the worker share
// one implementation. Types are declared in decodeWorker.d.mts.
//
// Facts used (sources):
// - Header, IFD layout, field types 1-12, tags 254-296 and PackBits/LZW codes: TIFF 6.0 spec
//   (Adobe, 3 June 1992), sections 2, 8, 9, 13, 14, 15, 19.
// - Compression 8 = Adobe Deflate, Predictor 3 = floating point: Adobe TIFF Technical Notes
//   (Photoshop TIFF Technical Notes, 2002). From memory.
// - BigTIFF header (magic 43, 8-byte offsets, field types 16-18): BigTIFF proposal (libtiff.org).
//   From memory.
// - OME-XML in ImageDescription of the first IFD; Pixels@PhysicalSizeX/Y, unit default "µm":
//   OME-TIFF specification and OME schema 2016-06 (docs/references.md §10).
import { isMainThread, parentPort, workerData } from 'node:worker_threads';
import { fromArrayBuffer } from 'geotiff';

/** Marker put in workerData so that importing this module inside some other worker does nothing. */
export const WORKER_KIND = 'heightlight-tiff-decode/1';

export class ImagingError extends Error {
  /**
   * @param {string} code snake_case error code
   * @param {string} message sentence a biologist can act on
   * @param {Record<string, unknown>} [details]
   */
  constructor(code, message, details) {
    super(message);
    this.name = 'ImagingError';
    this.code = code;
    this.details = details;
  }
}

export const DEFAULT_LIMITS = Object.freeze({
  maxFileBytes: 1024 * 1024 * 1024,
  maxPixels: 16384 * 16384,
  maxDecodedBytes: 1024 * 1024 * 1024,
  maxPages: 256,
});

// Field type → byte size. TIFF 6.0 section 2 (types 1-12); BigTIFF adds 16-18 (from memory).
const TYPE_SIZE = {
  1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4, 16: 8, 17: 8, 18: 8,
};

// Compression values. 1, 2, 3, 4, 5, 6, 32773: TIFF 6.0 section 3, 8, 10, 11, 13, 22 and 9.
// 7 (JPEG), 8 (Adobe Deflate): Adobe technical notes (from memory). The rest: libtiff's tiff.h (from memory).
const COMPRESSION_NAMES = {
  1: 'none', 2: 'CCITT modified Huffman', 3: 'CCITT Group 3 fax', 4: 'CCITT Group 4 fax', 5: 'LZW',
  6: 'old-style JPEG', 7: 'JPEG', 8: 'Deflate', 32773: 'PackBits', 32946: 'Deflate (old code)',
  34712: 'JPEG 2000', 34887: 'LERC', 34925: 'LZMA', 50000: 'Zstandard', 50001: 'WebP',
};
/** Compressions decoded here: lossless ones that geotiff 3 decodes without extra WebAssembly. */
const SUPPORTED_COMPRESSION = new Set([1, 5, 8, 32773, 32946]);

const SAMPLE_FORMATS = { 1: 'uint', 2: 'int', 3: 'float' };

// OME UnitsLength symbols → nanometres (OME schema 2016-06 UnitsLength; factors are SI definitions).
const NM_PER_UNIT = {
  m: 1e9, dm: 1e8, cm: 1e7, mm: 1e6, 'µm': 1e3, 'μm': 1e3, um: 1e3, nm: 1, pm: 1e-3, 'Å': 0.1,
};

const FILE_HELP = 'Export the image again from the instrument software as a TIFF and upload the new file.';

/** @param {Uint8Array | ArrayBuffer} bytes */
function asBytes(bytes) {
  if (bytes instanceof Uint8Array) return bytes;
  if (bytes instanceof ArrayBuffer) return new Uint8Array(bytes);
  if (ArrayBuffer.isView(bytes)) return new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  throw new TypeError('inspectTiff expects a Uint8Array or an ArrayBuffer holding the file bytes.');
}

function truncated(what) {
  return new ImagingError(
    'truncated',
    `The file ends before the ${what} it declares: it may be truncated (an interrupted copy or upload). Upload it again.`,
  );
}

function corrupt(what) {
  return new ImagingError('corrupt', `The TIFF file is damaged: ${what}. ${FILE_HELP}`);
}

/** Reads the IFD chain and the entries of each IFD without trusting any offset. */
function walkIfds(u8, limits) {
  const len = u8.length;
  if (len < 4) {
    throw new ImagingError('not_tiff', `This file is not a TIFF image (it is only ${len} bytes long). ${FILE_HELP}`);
  }
  const order = String.fromCharCode(u8[0], u8[1]);
  if (order !== 'II' && order !== 'MM') {
    throw new ImagingError('not_tiff', `This file is not a TIFF image: it does not start with the TIFF signature. ${FILE_HELP}`);
  }
  const le = order === 'II';
  const dv = new DataView(u8.buffer, u8.byteOffset, u8.byteLength);
  const magic = dv.getUint16(2, le);
  if (magic !== 42 && magic !== 43) {
    throw new ImagingError('not_tiff', `This file is not a TIFF image: it does not start with the TIFF signature. ${FILE_HELP}`);
  }
  const big = magic === 43;
  const headerSize = big ? 16 : 8;
  if (len < headerSize) throw truncated('image directory');
  if (big && (dv.getUint16(4, le) !== 8 || dv.getUint16(6, le) !== 0)) {
    throw corrupt('its BigTIFF header declares an unsupported offset size');
  }
  const u64 = (p) => {
    const v = dv.getBigUint64(p, le);
    return v > BigInt(Number.MAX_SAFE_INTEGER) ? Number.MAX_SAFE_INTEGER : Number(v);
  };
  const readOffset = big ? u64 : (p) => dv.getUint32(p, le);
  const countSize = big ? 8 : 2;
  const entrySize = big ? 20 : 12;
  const inlineSize = big ? 8 : 4;

  const ifds = [];
  const seen = new Set();
  let offset = readOffset(big ? 8 : 4);
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
    if (offset < headerSize) throw corrupt('an image directory points into the file header');
    if (offset + countSize > len) throw truncated('image directory');
    const n = big ? u64(offset) : dv.getUint16(offset, le);
    if (n === 0) throw corrupt('an image directory is empty');
    const entriesEnd = offset + countSize + n * entrySize;
    if (entriesEnd + inlineSize > len) throw truncated('image directory');

    const entries = new Map();
    for (let i = 0; i < n; i++) {
      const p = offset + countSize + i * entrySize;
      const tag = dv.getUint16(p, le);
      const type = dv.getUint16(p + 2, le);
      const count = big ? u64(p + 4) : dv.getUint32(p + 4, le);
      const valuePos = p + 4 + (big ? 8 : 4);
      const size = TYPE_SIZE[type];
      if (size === undefined) {
        // TIFF 6.0 section 2: readers should skip fields of an unexpected type.
        entries.set(tag, { tag, type, count, unknownType: true });
        continue;
      }
      const byteLength = count * size;
      let dataPos = valuePos;
      if (byteLength > inlineSize) {
        dataPos = readOffset(valuePos);
        if (dataPos + byteLength > len) {
          throw dataPos >= len ? truncated('tag values') : corrupt(`tag ${tag} points outside the file`);
        }
      }
      if (!entries.has(tag)) entries.set(tag, { tag, type, count, dataPos });
    }
    ifds.push({ offset, entries });
    offset = readOffset(entriesEnd);
  }
  return { le, big, dv, ifds };
}

/** Numeric values of an entry (rationals as num/den), or undefined when absent. */
function values(ctx, ifd, tag) {
  const e = ifd.entries.get(tag);
  if (!e) return undefined;
  if (e.unknownType) throw corrupt(`tag ${tag} has an unknown value type (${e.type})`);
  const { dv, le } = ctx;
  const out = new Array(e.count);
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

function single(ctx, ifd, tag, fallback) {
  const v = values(ctx, ifd, tag);
  if (v === undefined || v.length === 0) return fallback;
  return v[0];
}

function text(ctx, ifd, tag) {
  const e = ifd.entries.get(tag);
  if (!e || e.unknownType || (e.type !== 2 && e.type !== 7 && e.type !== 1)) return null;
  const raw = new Uint8Array(ctx.dv.buffer, ctx.dv.byteOffset + e.dataPos, e.count);
  const end = raw.indexOf(0);
  // OME-TIFF stores UTF-8 in this ASCII field (OME-TIFF specification).
  return new TextDecoder('utf-8').decode(end === -1 ? raw : raw.subarray(0, end));
}

/** Validates one image directory and returns its page description. */
function describePage(ctx, ifd, index, limits, fileLength) {
  const width = single(ctx, ifd, 256);
  const height = single(ctx, ifd, 257);
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
  let blockW; let blockH; let nBlocks; let offsets; let counts;
  if (tiled) {
    blockW = single(ctx, ifd, 322);
    blockH = single(ctx, ifd, 323);
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
  const page = {
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

function decodeXmlEntities(s) {
  return s
    .replace(/&#x([0-9a-f]+);/gi, (_, h) => String.fromCodePoint(parseInt(h, 16)))
    .replace(/&#(\d+);/g, (_, d) => String.fromCodePoint(parseInt(d, 10)))
    .replace(/&quot;/g, '"').replace(/&apos;/g, "'").replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&amp;/g, '&');
}

function xmlAttr(tag, name) {
  const m = new RegExp(`\\s${name}\\s*=\\s*(?:"([^"]*)"|'([^']*)')`).exec(tag);
  return m ? decodeXmlEntities(m[1] ?? m[2]) : undefined;
}

/** Pixel size from OME-XML Pixels@PhysicalSizeX/Y; undefined when the description is not OME-XML. */
function pixelSizeFromOme(description, warnings) {
  if (!description || !/<(?:\w+:)?OME[\s>]/.test(description)) return undefined;
  const pixels = /<(?:\w+:)?Pixels\b[^>]*>/.exec(description);
  if (!pixels) return undefined;
  const axis = (a) => {
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
function channelEmissionFromOme(description, warnings) {
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
function pixelSizeFromResolution(ctx, ifd, warnings) {
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
  const xs = xRes ?? yRes;
  const ys = yRes ?? xRes;
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
 * Checks a TIFF file's structure and declared size, without decoding pixels.
 * See decodeWorker.d.mts for the documented signature.
 */
export function inspectTiff(bytes, limits = DEFAULT_LIMITS) {
  return inspect(bytes, limits).meta;
}

function inspect(bytes, limits) {
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
  let pixelSizeSource = pixelSizeNm ? 'ome-xml' : null;
  if (pixelSizeNm === undefined || pixelSizeNm === null) {
    pixelSizeNm = pixelSizeFromResolution(ctx, first, warnings);
    pixelSizeSource = pixelSizeNm ? 'resolution-tags' : null;
  }
  const channelEmissionNm = channelEmissionFromOme(imageDescription, warnings);
  const p0 = pages[0];
  const meta = {
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

/**
 * Dry run of TIFF LZW (TIFF 6.0 section 13) that tracks only string lengths, mirroring how geotiff 3.0.5's
 * decoder reads codes (MSB-first, width grows when the table holds 2^width − 1 entries, missing bits are 0,
 * end of data acts as EndOfInformation). geotiff's decoder loops forever (and then aborts the whole
 * process with an array-size error) on codes it never stored: a code ≥ 4093 (its table size) or a code
 * beyond the next free entry. Found by fuzz.test.ts. This check rejects such streams, and any stream that
 * would expand beyond maxOut bytes, before geotiff sees them. Cost: one pass over the compressed bytes.
 */
function checkLzwStream(data, maxOut, ifdIndex) {
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

/** Maps anything geotiff throws on damaged data to an ImagingError. */
function asImagingError(err) {
  if (err instanceof ImagingError) return err;
  return new ImagingError(
    'corrupt',
    `The image data could not be decoded: the file is probably damaged. ${FILE_HELP}`,
    { cause: err instanceof Error ? err.message : String(err) },
  );
}

/**
 * Decodes every full-resolution page to Float32Array after inspectTiff accepted the file.
 * See decodeWorker.d.mts for the documented signature.
 */
export async function decodeTiff(bytes, limits = DEFAULT_LIMITS) {
  const { meta, blocks } = inspect(bytes, limits);
  const u8 = asBytes(bytes);
  for (const page of meta.pages) {
    if (page.compression !== 5) continue;
    const { offsets, counts, maxBytes } = blocks[page.ifdIndex];
    for (let i = 0; i < offsets.length; i++) {
      checkLzwStream(u8.subarray(offsets[i], offsets[i] + counts[i]), 2 * maxBytes + 1024, page.ifdIndex);
    }
  }
  // geotiff needs an ArrayBuffer holding exactly the file; copy so the caller's buffer is never shared
  const buffer = u8.slice().buffer;
  const pages = [];
  try {
    const tiff = await fromArrayBuffer(buffer);
    for (const page of meta.pages) {
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

// worker entry: one request, one reply, then the parent terminates the worker
if (!isMainThread && parentPort && workerData && workerData.kind === WORKER_KIND) {
  parentPort.once('message', async (msg) => {
    try {
      const result = await decodeTiff(msg.bytes, msg.limits);
      const transfer = result.pages.map((p) => p.data.buffer);
      parentPort.postMessage({ ok: true, result }, transfer);
    } catch (err) {
      const e = asImagingError(err);
      parentPort.postMessage({ ok: false, code: e.code, message: e.message, details: e.details });
    }
  });
}
