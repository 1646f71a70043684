/** Error codes thrown by the imaging layer (snake_case, STYLE.md §2). */
export type ImagingErrorCode =
  | 'not_tiff'
  | 'truncated'
  | 'corrupt'
  | 'unsupported_compression'
  | 'bad_sample_format'
  | 'too_large'
  | 'timeout'
  | 'worker_failed';

/** Limits checked against the declared sizes before any pixel is decoded. */
export interface TiffLimits {
  /** Largest file accepted (bytes). @default 1 GiB */
  maxFileBytes?: number;
  /** Largest width × height of one page (pixels). @default 16384 × 16384 */
  maxPixels?: number;
  /** Largest memory needed to decode all pages: Σ width × height × (bytes per sample + 4) (bytes). @default 1 GiB */
  maxDecodedBytes?: number;
  /** Largest number of image directories (pages) in the file. @default 256 */
  maxPages?: number;
}

export type SampleFormat = 'uint' | 'int' | 'float';

/** One image directory of the file. */
export interface TiffPageInfo {
  /** Position of the IFD in the file's chain (0-based), including skipped previews. */
  ifdIndex: number;
  width: number;
  height: number;
  bitsPerSample: number;
  sampleFormat: SampleFormat;
  samplesPerPixel: number;
  /** TIFF Compression code (1 none, 5 LZW, 8/32946 Deflate, 32773 PackBits). */
  compression: number;
  compressionName: string;
  layout: 'strips' | 'tiles';
  /** NewSubfileType bit 0: a reduced-resolution preview, not decoded. */
  reducedResolution: boolean;
}

/** What inspectTiff learned from the file's structure. */
export interface TiffMetadata {
  byteOrder: 'little-endian' | 'big-endian';
  bigTiff: boolean;
  /** Width of the first full-resolution page (pixels). */
  width: number;
  /** Height of the first full-resolution page (pixels). */
  height: number;
  bitsPerSample: number;
  sampleFormat: SampleFormat;
  samplesPerPixel: number;
  /** Compression name of the first page ('none', 'LZW', 'Deflate', 'PackBits'). */
  compression: string;
  /** Number of full-resolution pages (channels of a stack). */
  pageCount: number;
  pages: TiffPageInfo[];
  /** Pixel size (nm) along x and y, or null when the file does not state one. */
  pixelSizeNm: { x: number; y: number } | null;
  pixelSizeSource: 'ome-xml' | 'resolution-tags' | null;
  /** ImageDescription of the first IFD (OME-XML in OME-TIFF), or null. */
  imageDescription: string | null;
  /**
   * Emission wavelength (nm) of each OME-XML Channel of the first Pixels, in document order (null where a channel
   * states none or an unusable one); [] without OME-XML channels. Unit attribute default "nm" (OME schema 2016-06).
   */
  channelEmissionNm: (number | null)[];
  /** Memory decoding will need (bytes), as compared with maxDecodedBytes. */
  decodedBytes: number;
  /** Non-fatal findings for the user (ignored pixel size, skipped previews). */
  warnings: string[];
}

/** One decoded page, row-major, values as stored in the file (nm for height maps, counts for fluorescence). */
export interface DecodedPage {
  data: Float32Array;
  width: number;
  height: number;
}

export interface DecodedTiff {
  /** Full-resolution pages in file order; in a multi-page stack each page is one channel. */
  pages: DecodedPage[];
  meta: TiffMetadata;
}

/** workerData.kind of a decoder thread (decodeInWorker.ts starts it, decodeThread.ts answers only then). */
export const DECODE_THREAD_KIND = 'heightlight-tiff-decode/2';

/** A request to a decoder thread. */
export interface DecodeRequest { id: number; bytes: Uint8Array; limits: TiffLimits }

/** A decoder thread's answer to request `id`. */
export interface DecodeReply {
  id: number;
  ok: boolean;
  result?: DecodedTiff;
  code?: ImagingErrorCode;
  message?: string;
  details?: Record<string, unknown>;
}
