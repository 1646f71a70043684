// Seeded generators of mutated TIFF files, shared by the in-process fuzz test and the HTTP-level
// upload fuzz (tests/integration/upload-fuzz.test.ts).
import { writeTiff, type WriteTiffOptions } from '../writeTiff';
import { entries, ifdOffsets, isLittleEndian, nextPointerAt, view } from './tiffBytes';

/** The geometry core's mulberry32: same seed → same cases. */
import { mulberry32 as prng } from '../../analysis/geometry/mulberry32';
export { prng };

export function baseFiles(): Uint8Array[] {
  const img = (w: number, h: number, f: (i: number) => number) => ({ data: Array.from({ length: w * h }, (_, i) => f(i)), width: w, height: h });
  const variants: Array<[WriteTiffOptions, number]> = [
    [{ bitsPerSample: 8, sampleFormat: 'uint' }, 1],
    [{ bitsPerSample: 16, sampleFormat: 'uint', compression: 'lzw', rowsPerStrip: 5 }, 2],
    [{ bitsPerSample: 16, sampleFormat: 'int', compression: 'deflate', byteOrder: 'big' }, 1],
    [{ bitsPerSample: 32, sampleFormat: 'float', compression: 'packbits', rowsPerStrip: 3 }, 3],
    [{ bitsPerSample: 32, sampleFormat: 'uint', tileSize: 16 }, 1],
    [{ bitsPerSample: 16, sampleFormat: 'uint', compression: 'lzw', tileSize: 16, byteOrder: 'big' }, 2],
    [{ bitsPerSample: 64, sampleFormat: 'float', resolution: { x: 1e5, y: 1e5, unit: 'centimetre' } }, 1],
    [{
      bitsPerSample: 16, sampleFormat: 'uint', compression: 'deflate',
      imageDescription: '<OME><Image><Pixels PhysicalSizeX="0.1" PhysicalSizeY="0.1"></Pixels></Image></OME>',
    }, 2],
  ];
  return variants.map(([opts, nbPages], v) => writeTiff(
    Array.from({ length: nbPages }, (_, p) => img(20 + v, 13, (i) => (opts.sampleFormat === 'int' ? ((i * 37 + p) % 200) - 100 : (i * 37 + p * 11 + v) % 200))),
    opts,
  ));
}

type Mutator = (f: Uint8Array, r: () => number) => Uint8Array;
const int = (r: () => number, n: number): number => Math.floor(r() * n);

/** Positions of the entry value fields of a well-formed file, for targeted mutations. */
function entryAts(f: Uint8Array): number[] {
  try {
    return ifdOffsets(f).flatMap((_, i) => entries(f, i).map((e) => e.at));
  } catch {
    return [];
  }
}

const MUTATORS: Record<string, Mutator> = {
  bitFlips: (f, r) => {
    const g = f.slice();
    const n = 1 + int(r, 8);
    for (let k = 0; k < n; k++) {
      const p = int(r, g.length);
      g[p] ^= 1 << int(r, 8);
    }
    return g;
  },
  truncate: (f, r) => f.slice(0, int(r, f.length)),
  hugeSize: (f, r) => {
    const g = f.slice();
    const le = isLittleEndian(g);
    for (const e of entries(g, 0)) {
      if (e.tag === 256 || e.tag === 257) {
        const v = r() < 0.5 ? 100000 : int(r, 2 ** 32);
        if (e.type === 3) view(g).setUint16(e.at + 8, v & 0xffff, le); else view(g).setUint32(e.at + 8, v, le);
      }
    }
    return g;
  },
  wrongOffset: (f, r) => {
    const g = f.slice();
    const le = isLittleEndian(g);
    const targets = [4, ...entryAts(g).map((a) => a + 8), ...ifdOffsets(g).map((_, i) => nextPointerAt(g, i))];
    const at = targets[int(r, targets.length)];
    view(g).setUint32(at, r() < 0.3 ? g.length - int(r, 16) : int(r, 2 ** 32), le);
    return g;
  },
  cyclicIfd: (f, r) => {
    const g = f.slice();
    const offs = ifdOffsets(g);
    const from = int(r, offs.length);
    view(g).setUint32(nextPointerAt(g, from), offs[int(r, from + 1)], isLittleEndian(g));
    return g;
  },
  unknownCompression: (f, r) => {
    const g = f.slice();
    const e = entries(g, 0).find((x) => x.tag === 259)!;
    const codes = [0, 2, 3, 4, 6, 7, 9, 32946, 34712, 34887, 50000, 65535, int(r, 65536)];
    view(g).setUint16(e.at + 8, codes[int(r, codes.length)], isLittleEndian(g));
    return g;
  },
  randomTagValue: (f, r) => {
    const g = f.slice();
    const ats = entryAts(g);
    const at = ats[int(r, ats.length)];
    const dv = view(g);
    const le = isLittleEndian(g);
    const field = int(r, 4);
    if (field === 0) dv.setUint16(at + 2, int(r, 20), le); // type, including invalid ones
    else if (field === 1) dv.setUint32(at + 4, r() < 0.5 ? int(r, 8) : int(r, 2 ** 32), le); // count
    else dv.setUint32(at + 8, r() < 0.5 ? int(r, 70000) : int(r, 2 ** 32), le); // value or offset
    return g;
  },
  randomBytes: (f, r) => {
    const g = f.slice();
    const start = int(r, g.length);
    const n = 1 + int(r, 32);
    for (let k = 0; k < n && start + k < g.length; k++) g[start + k] = int(r, 256);
    return g;
  },
};
const NAMES = Object.keys(MUTATORS);

export function mutate(base: Uint8Array, seed: number): { file: Uint8Array; steps: string[] } {
  const r = prng(seed);
  const steps: string[] = [];
  let file = base;
  const nbSteps = r() < 0.7 ? 1 : 2 + int(r, 2);
  for (let s = 0; s < nbSteps; s++) {
    const name = NAMES[int(r, NAMES.length)];
    try {
      file = MUTATORS[name](file, r);
      steps.push(name);
    } catch {
      // a previous step broke the structure the helper walks; keep the file as it is
      steps.push(`${name}(skipped)`);
    }
  }
  return { file, steps };
}

