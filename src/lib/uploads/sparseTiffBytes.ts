/**
 * Fetches only the structural bytes of a TIFF (header, every IFD and the out-of-line tag values)
 * by ranged reads, into a zero-filled buffer of the file's full length. The OS commits memory only
 * for the pages written, so a 1 GB upload is inspected with a few MB resident; pixel data is never
 * read. inspectTiff then runs on this buffer exactly as on the whole file (it never reads strips).
 * Malformed chains stop the walk; inspectTiff then reports the problem in its own words.
 */
import { readIfdEntry, readOffset, readTiffHeader, readU64 } from '../imaging/tiffStructure';

export type RangeReader = (start: number, endExclusive: number) => Promise<Uint8Array>;

const MAX_IFDS = 1024;
const MAX_TAG_BYTES = 64 * 1024 * 1024;

export async function sparseTiffBytes(size: number, read: RangeReader): Promise<Uint8Array> {
  const out = new Uint8Array(size);
  const fetch = async (start: number, len: number) => {
    const end = Math.min(size, start + len);
    if (start < 0 || start >= end) return null;
    const bytes = await read(start, end);
    out.set(bytes.subarray(0, end - start), start);
    return new DataView(out.buffer, start, end - start);
  };
  const head = await fetch(0, 16);
  // the header and entry layout are inspectTiff's own (lib/imaging/tiffStructure.ts)
  const header = head ? readTiffHeader(head) : null;
  if (!header) return out;
  const { littleEndian: le, big, countBytes, entryBytes, inlineBytes } = header;
  let ifd = header.firstIfdOffset;
  const seen = new Set<number>();
  let tagBytes = 0;
  while (ifd > 0 && ifd < size && !seen.has(ifd) && seen.size < MAX_IFDS) {
    seen.add(ifd);
    const countView = await fetch(ifd, countBytes);
    if (!countView || countView.byteLength < countBytes) break;
    const n = big ? readU64(countView, 0, le) : countView.getUint16(0, le);
    const entries = await fetch(ifd + countBytes, n * entryBytes + inlineBytes);
    if (!entries) break;
    for (let i = 0; i < n && (i + 1) * entryBytes <= entries.byteLength; i++) {
      const e = readIfdEntry(entries, i * entryBytes, le, header);
      if (!e.knownType || e.byteLength <= inlineBytes || tagBytes + e.byteLength > MAX_TAG_BYTES) continue;
      tagBytes += e.byteLength;
      await fetch(e.dataPos, e.byteLength);
    }
    const nextAt = n * entryBytes;
    if (nextAt + inlineBytes > entries.byteLength) break;
    ifd = readOffset(entries, nextAt, le, big);
  }
  return out;
}
