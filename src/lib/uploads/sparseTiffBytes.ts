/**
 * Fetches only the structural bytes of a TIFF (header, every IFD and the out-of-line tag values)
 * by ranged reads, into a zero-filled buffer of the file's full length. The OS commits memory only
 * for the pages written, so a 1 GB upload is inspected with a few MB resident; pixel data is never
 * read. inspectTiff then runs on this buffer exactly as on the whole file (it never reads strips).
 * Malformed chains stop the walk; inspectTiff then reports the problem in its own words.
 */
export type RangeReader = (start: number, endExclusive: number) => Promise<Uint8Array>;

const TYPE_SIZES: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4, 16: 8, 17: 8, 18: 8 };
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
  if (!head || head.byteLength < 8) return out;
  const le = head.getUint8(0) === 0x49;
  const magic = head.getUint16(2, le);
  const big = magic === 43;
  if (magic !== 42 && !big) return out;
  const u64 = (v: DataView, o: number) => Number(v.getBigUint64(o, le));
  let ifd = big ? u64(head, 8) : head.getUint32(4, le);
  const seen = new Set<number>();
  let tagBytes = 0;
  while (ifd > 0 && ifd < size && !seen.has(ifd) && seen.size < MAX_IFDS) {
    seen.add(ifd);
    const countView = await fetch(ifd, big ? 8 : 2);
    if (!countView || countView.byteLength < (big ? 8 : 2)) break;
    const n = big ? u64(countView, 0) : countView.getUint16(0, le);
    const entrySize = big ? 20 : 12;
    const entries = await fetch(ifd + (big ? 8 : 2), n * entrySize + (big ? 8 : 4));
    if (!entries) break;
    for (let i = 0; i < n && (i + 1) * entrySize <= entries.byteLength; i++) {
      const e = i * entrySize;
      const type = entries.getUint16(e + 2, le);
      const count = big ? u64(entries, e + 4) : entries.getUint32(e + 4, le);
      const bytes = (TYPE_SIZES[type] ?? 0) * count;
      if (bytes <= (big ? 8 : 4) || tagBytes + bytes > MAX_TAG_BYTES) continue;
      tagBytes += bytes;
      await fetch(big ? u64(entries, e + 12) : entries.getUint32(e + 8, le), bytes);
    }
    const nextAt = n * entrySize;
    if (nextAt + (big ? 8 : 4) > entries.byteLength) break;
    ifd = big ? u64(entries, nextAt) : entries.getUint32(nextAt, le);
  }
  return out;
}
