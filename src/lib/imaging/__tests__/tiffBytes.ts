// Test helpers that edit classic TIFF files written by writeTiff (structure per TIFF 6.0 spec, section 2:
// 8-byte header, IFD = 2-byte count, 12-byte entries {tag, type, count, value/offset}, 4-byte next offset).
// The header and entries are read with the inspection's own layout code (../tiffStructure.ts).
import { ifdLayout, readIfdEntry, readTiffHeader } from '../tiffStructure';

export interface EntryRef {
  /** Byte position of the 12-byte entry. */
  at: number;
  tag: number;
  type: number;
  count: number;
}

export function isLittleEndian(bytes: Uint8Array): boolean {
  return bytes[0] === 0x49;
}

export function view(bytes: Uint8Array): DataView {
  return new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
}

/** Offsets of every IFD, following the chain of a well-formed file. */
export function ifdOffsets(bytes: Uint8Array): number[] {
  const dv = view(bytes);
  const le = isLittleEndian(bytes);
  const out: number[] = [];
  let off = readTiffHeader(dv)?.firstIfdOffset ?? 0;
  while (off !== 0 && out.length < 1000) {
    out.push(off);
    const n = dv.getUint16(off, le);
    off = dv.getUint32(off + 2 + n * 12, le);
  }
  return out;
}

export function entries(bytes: Uint8Array, ifdIndex = 0): EntryRef[] {
  const dv = view(bytes);
  const le = isLittleEndian(bytes);
  const off = ifdOffsets(bytes)[ifdIndex];
  const n = dv.getUint16(off, le);
  return Array.from({ length: n }, (_, i) => {
    const at = off + 2 + i * 12;
    const { tag, type, count } = readIfdEntry(dv, at, le, ifdLayout(false));
    return { at, tag, type, count };
  });
}

export function entry(bytes: Uint8Array, tag: number, ifdIndex = 0): EntryRef {
  const e = entries(bytes, ifdIndex).find((x) => x.tag === tag);
  if (!e) throw new Error(`tag ${tag} not in IFD ${ifdIndex}`);
  return e;
}

/** Overwrites the inline value of a SHORT or LONG entry with one value (returns a modified copy). */
export function setInline(bytes: Uint8Array, tag: number, value: number, ifdIndex = 0): Uint8Array {
  const copy = bytes.slice();
  const dv = view(copy);
  const le = isLittleEndian(copy);
  const e = entry(copy, tag, ifdIndex);
  if (e.type === 3) dv.setUint16(e.at + 8, value, le);
  else dv.setUint32(e.at + 8, value, le);
  return copy;
}

/** Position of the "next IFD" pointer that follows the given IFD. */
export function nextPointerAt(bytes: Uint8Array, ifdIndex: number): number {
  const dv = view(bytes);
  const off = ifdOffsets(bytes)[ifdIndex];
  return off + 2 + dv.getUint16(off, isLittleEndian(bytes)) * 12;
}
