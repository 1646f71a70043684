/**
 * The byte layout of a TIFF's structure, shared by the defensive inspection (inspectTiff.ts) and the ranged
 * reader of uploads (lib/uploads/sparseTiffBytes.ts): the header, the IFD entry layout and the field type sizes.
 * - Header, IFD layout, field types 1-12: TIFF 6.0 specification (Adobe, 3 June 1992), section 2.
 * - BigTIFF header (magic 43, 8-byte offsets, field types 16-18): BigTIFF proposal (libtiff.org). From memory.
 */

/** Field type → bytes per value. TIFF 6.0 section 2 (types 1-12, 13 = IFD); BigTIFF adds 16-18 (from memory). */
export const TIFF_TYPE_BYTES: Readonly<Record<number, number>> = {
  1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4, 16: 8, 17: 8, 18: 8,
};

/** Sizes that differ between classic TIFF and BigTIFF. */
export interface IfdLayout {
  big: boolean;
  /** Header bytes (8 or 16). */
  headerBytes: number;
  /** Bytes of an IFD's entry count (2 or 8). */
  countBytes: number;
  /** Bytes of one entry (12 or 20). */
  entryBytes: number;
  /** Bytes of a value held in the entry itself, and of an offset (4 or 8). */
  inlineBytes: number;
}

/** What the first bytes of a TIFF say, or null when they are not a TIFF header. */
export interface TiffHeader extends IfdLayout {
  littleEndian: boolean;
  /** The first IFD's offset (BigTIFF offsets above 2^53 are clamped to Number.MAX_SAFE_INTEGER). */
  firstIfdOffset: number;
  /** BigTIFF only: false when bytes 4-7 do not declare 8-byte offsets. */
  offsetSizeOk: boolean;
}

export const ifdLayout = (big: boolean): IfdLayout => ({
  big, headerBytes: big ? 16 : 8, countBytes: big ? 8 : 2, entryBytes: big ? 20 : 12, inlineBytes: big ? 8 : 4,
});

/** An unsigned 64-bit value as a number, clamped to Number.MAX_SAFE_INTEGER (no file is that large). */
export function readU64(dv: DataView, at: number, littleEndian: boolean): number {
  const v = dv.getBigUint64(at, littleEndian);
  return v > BigInt(Number.MAX_SAFE_INTEGER) ? Number.MAX_SAFE_INTEGER : Number(v);
}

/** An offset or count of `layout`'s width at `at`. */
export const readOffset = (dv: DataView, at: number, littleEndian: boolean, big: boolean): number =>
  big ? readU64(dv, at, littleEndian) : dv.getUint32(at, littleEndian);

/** Byte order and kind from the first 4 bytes (II or MM, then 42 or 43), or null when they are not a TIFF's. */
export function readTiffSignature(dv: DataView): { littleEndian: boolean; big: boolean } | null {
  if (dv.byteLength < 4) return null;
  const order = String.fromCharCode(dv.getUint8(0), dv.getUint8(1));
  if (order !== 'II' && order !== 'MM') return null;
  const littleEndian = order === 'II';
  const magic = dv.getUint16(2, littleEndian);
  return magic === 42 || magic === 43 ? { littleEndian, big: magic === 43 } : null;
}

/**
 * Reads the header from a view of at least the file's first 8 bytes (16 for BigTIFF).
 * @returns null when the signature is not a TIFF's, or the view is shorter than the header
 */
export function readTiffHeader(dv: DataView): TiffHeader | null {
  const signature = readTiffSignature(dv);
  if (!signature) return null;
  const { littleEndian } = signature;
  const layout = ifdLayout(signature.big);
  if (dv.byteLength < layout.headerBytes) return null;
  const offsetSizeOk = !layout.big || (dv.getUint16(4, littleEndian) === 8 && dv.getUint16(6, littleEndian) === 0);
  return { ...layout, littleEndian, firstIfdOffset: readOffset(dv, layout.big ? 8 : 4, littleEndian, layout.big), offsetSizeOk };
}

/** One IFD entry as stored. */
export interface IfdEntry {
  tag: number;
  type: number;
  count: number;
  /** Bytes of all values (0 for an unknown type). */
  byteLength: number;
  /** Where the values are: inside the entry when they fit, else the offset the entry holds. */
  dataPos: number;
  /** False when the type is not one TIFF or BigTIFF defines (readers skip such fields). */
  knownType: boolean;
}

/** Reads the entry whose first byte is at `at` (a view position); `base` is added to an inline value's position. */
export function readIfdEntry(dv: DataView, at: number, littleEndian: boolean, layout: IfdLayout, base = 0): IfdEntry {
  const tag = dv.getUint16(at, littleEndian);
  const type = dv.getUint16(at + 2, littleEndian);
  const count = layout.big ? readU64(dv, at + 4, littleEndian) : dv.getUint32(at + 4, littleEndian);
  const valuePos = at + 4 + layout.inlineBytes;
  const size = TIFF_TYPE_BYTES[type];
  if (size === undefined) return { tag, type, count, byteLength: 0, dataPos: base + valuePos, knownType: false };
  const byteLength = count * size;
  const dataPos = byteLength > layout.inlineBytes ? readOffset(dv, valuePos, littleEndian, layout.big) : base + valuePos;
  return { tag, type, count, byteLength, dataPos, knownType: true };
}
