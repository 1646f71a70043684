import { mkdtemp, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { buildDeepZoom, deepZoomLevels, type DeepZoomTile } from '../buildDeepZoom';

const gradient = (width: number, height: number): Uint8Array => {
  const rgb = new Uint8Array(width * height * 3);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = (y * width + x) * 3;
      rgb[i] = x % 256; rgb[i + 1] = y % 256; rgb[i + 2] = 200;
    }
  }
  return rgb;
};

async function collect(gen: AsyncGenerator<DeepZoomTile>): Promise<DeepZoomTile[]> {
  const out: DeepZoomTile[] = [];
  for await (const t of gen) out.push(t);
  return out;
}

describe('deepZoomLevels', () => {
  it('1000 × 700, tile 254 → levels 0..10, level 10 has 4 × 3 tiles, level 0 is 1 × 1 (Deep Zoom: maxLevel = ceil(log2(max(w, h))))', () => {
    const levels = deepZoomLevels(1000, 700, 254);
    expect(levels).toHaveLength(11);
    expect(levels[10]).toEqual({ level: 10, width: 1000, height: 700, cols: 4, rows: 3 });
    expect(levels[9]).toEqual({ level: 9, width: 500, height: 350, cols: 2, rows: 2 });
    expect(levels[0]).toEqual({ level: 0, width: 1, height: 1, cols: 1, rows: 1 });
    // a power of two needs no extra level: 1024 → levels 0..10
    expect(deepZoomLevels(1024, 1, 254)).toHaveLength(11);
    expect(deepZoomLevels(1025, 1, 254)).toHaveLength(12);
  });
});

describe('buildDeepZoom', () => {
  it('matches libvips dzsave (sharp.tile, layout dz) in levels, tile names and tile sizes for 1000 × 700', async () => {
    const width = 1000;
    const height = 700;
    const rgb = gradient(width, height);
    const dz = buildDeepZoom(rgb, width, height, { tileSize: 254, overlap: 1, format: 'png' });
    const tiles = await collect(dz.tiles());

    // reference: libvips' own Deep Zoom writer, through sharp 0.34
    const dir = await mkdtemp(join(tmpdir(), 'hl-dz-'));
    try {
      await sharp(Buffer.from(rgb), { raw: { width, height, channels: 3 } })
        .png()
        .tile({ size: 254, overlap: 1, layout: 'dz' })
        .toFile(join(dir, 'ref.dz'));
      const refLevels = (await readdir(join(dir, 'ref_files')))
        .filter((n) => /^\d+$/.test(n)) // libvips also writes vips-properties.xml
        .map(Number)
        .sort((a, b) => a - b);
      expect(refLevels).toEqual(dz.levels.map((l) => l.level));
      for (const level of [10, 9, 8, 1, 0]) {
        const names = (await readdir(join(dir, 'ref_files', String(level)))).sort();
        const ours = tiles.filter((t) => t.level === level).map((t) => t.path.split('/')[1]).sort();
        expect(ours).toEqual(names);
        for (const name of names) {
          const refMeta = await sharp(join(dir, 'ref_files', String(level), name)).metadata();
          const ourMeta = await sharp(tiles.find((t) => t.path === `${level}/${name}`)!.bytes).metadata();
          expect([ourMeta.width, ourMeta.height, ourMeta.format]).toEqual([refMeta.width, refMeta.height, 'png']);
        }
      }
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
    expect(tiles.filter((t) => t.level === 10)).toHaveLength(12);
    expect(tiles).toHaveLength(dz.levels.reduce((s, l) => s + l.cols * l.rows, 0));
  });

  it('writes the DZI descriptor of the Deep Zoom schema (Image@TileSize, Overlap, Format; Size@Width, Height)', () => {
    const dz = buildDeepZoom(new Uint8Array(1000 * 700 * 3), 1000, 700, { format: 'jpeg' });
    expect(dz.dziXml).toBe(
      '<?xml version="1.0" encoding="UTF-8"?>\n'
      + '<Image xmlns="http://schemas.microsoft.com/deepzoom/2008" Format="jpeg" Overlap="1" TileSize="254">\n'
      + '  <Size Width="1000" Height="700"/>\n'
      + '</Image>\n',
    );
    expect(dz.maxLevel).toBe(10);
  });

  it('full-resolution tiles hold the exact source pixels, overlap included (PNG is lossless)', async () => {
    const width = 600;
    const height = 300;
    const rgb = gradient(width, height);
    const before = rgb.slice();
    const dz = buildDeepZoom(rgb, width, height, { tileSize: 254, overlap: 1 });
    const top = (await collect(dz.tiles())).filter((t) => t.level === dz.maxLevel);
    const tile = top.find((t) => t.col === 1 && t.row === 1)!;
    const { data, info } = await sharp(tile.bytes).raw().toBuffer({ resolveWithObject: true });
    // tile (1,1) covers x 253..508 and y 253..299: 254 + 2 overlap wide, clipped at the bottom edge
    expect([info.width, info.height]).toEqual([256, 47]);
    expect(Array.from(data.subarray(0, 3))).toEqual([253, 253, 200]);
    const last = (info.height - 1) * info.width * 3 + (info.width - 1) * 3;
    expect(Array.from(data.subarray(last, last + 3))).toEqual([508 % 256, 299 % 256, 200]);
    expect(rgb).toEqual(before);
  });

  it('level 0 of a uniform image is one pixel of that colour', async () => {
    const rgb = new Uint8Array(300 * 200 * 3);
    for (let i = 0; i < rgb.length; i += 3) rgb.set([10, 120, 230], i);
    const tiles = await collect(buildDeepZoom(rgb, 300, 200).tiles());
    const l0 = tiles.find((t) => t.level === 0)!;
    const { data, info } = await sharp(l0.bytes).raw().toBuffer({ resolveWithObject: true });
    expect([info.width, info.height]).toEqual([1, 1]);
    expect(Array.from(data)).toEqual([10, 120, 230]);
  });

  it('rejects an RGB buffer whose size disagrees with width × height × 3', () => {
    expect(() => buildDeepZoom(new Uint8Array(10), 2, 2)).toThrow(RangeError);
  });
});
