import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeFieldScene, type FieldScene } from '../../src/lib/analysis/pipeline/__tests__/fieldScene';
import { writeTiff } from '../../src/lib/imaging';

const root = fileURLToPath(new URL('../..', import.meta.url));

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs the CLI as users do (node + tsx loader), in the repository folder. */
function runCli(args: string[]): Promise<Run> {
  return new Promise((resolve) => {
    execFile(process.execPath, ['--import', 'tsx', 'scripts/analyze.ts', ...args], { cwd: root, timeout: 60_000 }, (error, stdout, stderr) => {
      const code = error ? (typeof error.code === 'number' ? error.code : -1) : 0;
      resolve({ code, stdout, stderr });
    });
  });
}

/** Pixels per centimetre for a pixel size in nm (TIFF ResolutionUnit 3; 1 cm = 10⁷ nm). */
const perCm = (nm: number) => 1e7 / nm;

describe('npm run analyze (scripts/analyze.ts)', () => {
  let dir: string;
  let scene: FieldScene;
  const f = (name: string) => join(dir, name);

  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'hl-analyze-'));
    // a smaller field than the core test keeps the child process quick
    scene = makeFieldScene({ seed: 11, afmSize: 384, nbVesicles: 24 });
    const { raster } = scene.afm;
    await writeFile(f('topo.tif'), writeTiff([{ data: raster.data, width: raster.width, height: raster.height }], {
      bitsPerSample: 32, sampleFormat: 'float',
      resolution: { x: perCm(scene.afmPixelNm), y: perCm(scene.afmPixelNm), unit: 'centimetre' },
    }));
    await writeFile(f('topo-nosize.tif'), writeTiff([{ data: raster.data, width: raster.width, height: raster.height }], {
      bitsPerSample: 32, sampleFormat: 'float',
    }));
    const flPages = scene.channels.map((c) => ({ data: c.raster.data, width: c.raster.width, height: c.raster.height }));
    const flOptions = {
      bitsPerSample: 16 as const, sampleFormat: 'uint' as const, compression: 'deflate' as const,
      resolution: { x: perCm(scene.flPixelNm), y: perCm(scene.flPixelNm), unit: 'centimetre' as const },
    };
    await writeFile(f('stack.tif'), writeTiff(flPages, flOptions));
    for (let i = 0; i < flPages.length; i++) await writeFile(f(`ch${i}.tif`), writeTiff([flPages[i]], flOptions));
    const rows = scene.beadsAfm.map((p, i) => `${(p.x + 2).toFixed(2)},${(p.y - 1).toFixed(2)},${scene.beadsFl[i].x.toFixed(2)},${scene.beadsFl[i].y.toFixed(2)}`);
    await writeFile(f('pairs.csv'), `afm_x,afm_y,fluor_x,fluor_y\n${rows.join('\n')}\n`);
    await writeFile(f('two-pairs.csv'), `afm_x,afm_y,fluor_x,fluor_y\n${rows.slice(0, 2).join('\n')}\n`);
    await writeFile(f('line.csv'), 'afm_x,afm_y,fluor_x,fluor_y\n10,10,5,5\n20,20,7,7\n30,30,9,9\n');
    await writeFile(f('bad-header.csv'), `x,y,u,v\n${rows.join('\n')}\n`);
    await writeFile(f('bad-row.csv'), `afm_x,afm_y,fluor_x,fluor_y\n${rows[0]}\n12,abc,3,4\n${rows[1]}\n`);
    await writeFile(f('not-a-tiff.tif'), 'this is a text file, not an image\n');
  });

  afterAll(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  it('analyses a field from a stack with fiducials: CSV columns, vesicle count, summary and stage timings', async () => {
    const run = await runCli([
      '--topography', f('topo.tif'), '--fluorescence', f('stack.tif'), '--fiducials', f('pairs.csv'),
      '--markers', 'CD9,CD63,CD81', '--emission-nm', '520,590,670', '--na', '1.4',
      '--out', f('vesicles.csv'), '--summary', f('summary.json'),
    ]);
    expect(run.stderr).not.toContain('unexpected');
    expect(run.code).toBe(0);
    const lines = (await readFile(f('vesicles.csv'), 'utf8')).trimEnd().split('\n');
    expect(lines[0]).toBe(
      'x_afm_px,y_afm_px,x_fl_px,y_fl_px,height_nm,diameter_nm,volume_nm3,area_nm2,circularity,' +
        'CD9_intensity,CD9_snr,CD9_amplitude_counts,CD9,CD63_intensity,CD63_snr,CD63_amplitude_counts,CD63,CD81_intensity,CD81_snr,CD81_amplitude_counts,CD81,out_of_frame,phenotype',
    );
    const rows = lines.slice(1).map((l) => l.split(','));
    // the test scene places 24 vesicles; detection finds ≥ 95 % of them with ≥ 95 % precision (core test)
    const truth = scene.vesicles.length;
    expect(rows.length).toBeGreaterThanOrEqual(Math.floor(0.95 * truth));
    expect(rows.length).toBeLessThanOrEqual(Math.ceil(truth / 0.95));
    for (const r of rows) {
      expect(r).toHaveLength(23); // 9 geometry + 3 markers × 4 (intensity, snr, amplitude, call) + out_of_frame + phenotype
      expect(Number(r[4])).toBeGreaterThan(2); // heights of 8–30 nm were drawn
    }
    const summary = JSON.parse(await readFile(f('summary.json'), 'utf8'));
    expect(summary.caution).toMatch(/research use only/i);
    expect(summary.nbVesicles).toBe(rows.length);
    expect(summary.afmPixelNm).toBeCloseTo(10, 6);
    expect(summary.flPixelNm).toBeCloseTo(65, 6);
    expect(summary.registration.source).toBe('fiducials');
    expect(summary.registration.mirrored).toBe(true);
    expect(summary.nbOutOfFrame).toBe(rows.filter((r) => r[21] === '1').length);
    for (const stage of ['level', 'detect', 'measure', 'spots', 'register', 'link', 'summarise']) {
      expect(run.stderr).toMatch(new RegExp(`\\[analyze\\] ${stage}\\s+\\d+ ms`));
    }
  });

  it('takes one file per channel and pairs automatically without --fiducials', async () => {
    const run = await runCli([
      '--topography', f('topo.tif'), '--fluorescence', f('ch0.tif'), '--fluorescence', f('ch1.tif'), '--fluorescence', f('ch2.tif'),
      '--markers', 'CD9,CD63,CD81', '--out', f('auto.csv'), '--summary', f('auto.json'), '--marker-threshold', 'CD81=1e9',
    ]);
    expect(run.code).toBe(0);
    const summary = JSON.parse(await readFile(f('auto.json'), 'utf8'));
    expect(summary.registration.source).toBe('automatic');
    expect(summary.channels.CD81.thresholdSource).toBe('given');
    expect(summary.positiveByMarker.CD81).toBe(0);
    expect(run.stderr).toContain('assuming 600 nm');
  });

  const base = () => ['--topography', f('topo.tif'), '--fluorescence', f('stack.tif'), '--markers', 'CD9,CD63,CD81', '--out', f('x.csv')];
  it.each([
    ['a missing file', () => ['--topography', f('nope.tif'), '--fluorescence', f('stack.tif'), '--markers', 'CD9,CD63,CD81', '--out', f('x.csv')], /nope\.tif" does not exist/],
    ['a file that is not a TIFF', () => ['--topography', f('not-a-tiff.tif'), '--fluorescence', f('stack.tif'), '--markers', 'CD9,CD63,CD81', '--out', f('x.csv')], /could not be read as a TIFF.*Export the image as TIFF/s],
    ['channel count ≠ markers', () => ['--topography', f('topo.tif'), '--fluorescence', f('stack.tif'), '--markers', 'CD9,CD63', '--out', f('x.csv')], /names 2 marker\(s\) \(CD9,CD63\) but the fluorescence input has 3 channel\(s\)/],
    ['a pixel size missing and not given', () => ['--topography', f('topo-nosize.tif'), '--fluorescence', f('stack.tif'), '--markers', 'CD9,CD63,CD81', '--out', f('x.csv')], /does not state its pixel size; give it with --afm-pixel-nm/],
    ['a malformed CSV header', () => [...base(), '--fiducials', f('bad-header.csv')], /line 1: the header is "x,y,u,v"; expected exactly afm_x,afm_y,fluor_x,fluor_y/],
    ['a malformed CSV row', () => [...base(), '--fiducials', f('bad-row.csv')], /line 3: afm_y is "abc", not a number/],
    ['fewer than 3 pairs', () => [...base(), '--fiducials', f('two-pairs.csv')], /has 2 fiducial pair\(s\); an affine registration needs at least 3/],
    ['collinear pairs', () => [...base(), '--fiducials', f('line.csv')], /lie on \(or very nearly on\) one straight line/],
    ['an unknown flag', () => [...base(), '--colour', 'red'], /Unknown option '--colour'/],
    ['a missing required flag', () => ['--topography', f('topo.tif')], /Missing --fluorescence, --markers, --out/],
    ['a threshold for an unknown marker', () => [...base(), '--marker-threshold', 'CD4=10'], /names "CD4", which is not in --markers/],
    ['a bad number', () => [...base(), '--na', 'high'], /--na must be a positive number, got "high"/],
  ])('exits 2 with a message that says what to fix for %s', async (_label, args, message) => {
    const run = await runCli(args());
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(message);
    expect(run.stderr).not.toMatch(/unexpected failure|\n\s+at /);
  });

  it('accepts the pixel size as a flag when the file has none', async () => {
    const run = await runCli(['--topography', f('topo-nosize.tif'), '--afm-pixel-nm', '10', '--fluorescence', f('stack.tif'),
      '--markers', 'CD9,CD63,CD81', '--fiducials', f('pairs.csv'), '--out', f('flag.csv'), '--threshold-nm', '1.5']);
    expect(run.code).toBe(0);
    expect((await readFile(f('flag.csv'), 'utf8')).split('\n')[0]).toMatch(/^x_afm_px,/);
  });
});
