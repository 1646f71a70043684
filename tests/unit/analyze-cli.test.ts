import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeFieldScene, type FieldScene } from '../../src/lib/analysis/pipeline/__tests__/fieldScene';
import { writeTiff } from '../../src/lib/imaging';
import { analyzeFieldFiles } from '../../scripts/lib/analyzeFieldFiles';

const root = fileURLToPath(new URL('../..', import.meta.url));

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs the CLI as `npm run analyze` does (the bundled JavaScript, rebuilt first if a source changed), in the repository folder. */
function runCli(args: string[]): Promise<Run> {
  return new Promise((resolve) => {
    execFile(process.execPath, ['scripts/run-bundled.mjs', 'analyze', ...args], { cwd: root, timeout: 120_000 }, (error, stdout, stderr) => {
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
    // an OME-TIFF stack as the project's TIFF writer makes it: OME-XML in ImageDescription with each Channel's
    // EmissionWavelength (OME schema 2016-06; unit attribute default nm, the second given in µm)
    const channels = [['CD9', '520', ''], ['CD63', '0.59', ' EmissionWavelengthUnit="µm"'], ['CD81', '670', ' EmissionWavelengthUnit="nm"']]
      .map(([name, nm, unit], i) => `<Channel ID="Channel:0:${i}" Name="${name}" SamplesPerPixel="1" EmissionWavelength="${nm}"${unit}/>`).join('');
    const omeXml = `<?xml version="1.0" encoding="UTF-8"?><OME xmlns="http://www.openmicroscopy.org/Schemas/OME/2016-06"><Image ID="Image:0">` +
      `<Pixels ID="Pixels:0" DimensionOrder="XYCZT" Type="uint16" SizeX="${flPages[0].width}" SizeY="${flPages[0].height}" SizeZ="1" SizeC="3" SizeT="1" ` +
      `PhysicalSizeX="${scene.flPixelNm / 1000}" PhysicalSizeY="${scene.flPixelNm / 1000}">${channels}</Pixels></Image></OME>`;
    await writeFile(f('ome.tif'), writeTiff(flPages, { bitsPerSample: 16, sampleFormat: 'uint', compression: 'deflate', imageDescription: omeXml }));
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
    // issue 13: the research-use caution leads the file; then the column set of docs/vesicle-columns.md
    expect(lines[0]).toBe('# Research use only. Not for diagnosis or treatment decisions.');
    expect(lines[1]).toBe(
      'vesicle,x_afm_px,y_afm_px,x_fl_px,y_fl_px,height_nm,cap_base_diameter_nm,cap_height_nm,cap_contact_angle_deg,cap_volume_nm3,' +
        'cap_sphere_diameter_nm,cap_flag,split,footprint_diameter_nm,footprint_area_nm2,footprint_volume_nm3,circularity,' +
        ['CD9', 'CD63', 'CD81'].map((m) => `${m}_amplitude_counts,${m}_amplitude_se_counts,${m}_z,${m}_z_calibrated,${m}_q,${m}_call`).join(',') + ',out_of_frame,phenotype',
    );
    const rows = lines.slice(2).map((l) => l.split(','));
    // the test scene places 24 vesicles; detection finds ≥ 95 % of them with ≥ 95 % precision (core test)
    const truth = scene.vesicles.length;
    expect(rows.length).toBeGreaterThanOrEqual(Math.floor(0.95 * truth));
    expect(rows.length).toBeLessThanOrEqual(Math.ceil(truth / 0.95));
    for (const r of rows) {
      expect(r).toHaveLength(37); // 17 per vesicle + 3 markers × 6 (amplitude, SE, z, calibrated z, q, call) + out_of_frame + phenotype
      expect(Number(r[5])).toBeGreaterThan(2); // heights of 8–30 nm were drawn
      expect(r[11]).toBe('no_tip_radius'); // no --tip-radius: the cap is the imaged one, and says so
      for (const call of [22, 28, 34]) expect(['positive', 'negative', 'not_measured']).toContain(r[call]);
    }
    const summary = JSON.parse(await readFile(f('summary.json'), 'utf8'));
    expect(summary.caution).toMatch(/research use only/i);
    expect(summary.nbVesicles).toBe(rows.length);
    expect(summary.afmPixelNm).toBeCloseTo(10, 6);
    expect(summary.flPixelNm).toBeCloseTo(65, 6);
    expect(summary.registration.source).toBe('fiducials');
    expect(summary.registration.mirrored).toBe(true);
    expect(summary.nbOutOfFrame).toBe(rows.filter((r) => r[35] === '1').length);
    expect(summary.parameters.emissionSource).toEqual(['flag', 'flag', 'flag']);
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

  it("reads each channel's emission wavelength from OME-XML (µm converted), and --emission-nm still wins", async () => {
    const run = await runCli([
      '--topography', f('topo.tif'), '--fluorescence', f('ome.tif'), '--fiducials', f('pairs.csv'),
      '--markers', 'CD9,CD63,CD81', '--out', f('ome.csv'), '--summary', f('ome.json'),
    ]);
    expect(run.code).toBe(0);
    expect(run.stderr).not.toContain('assuming 600 nm');
    const summary = JSON.parse(await readFile(f('ome.json'), 'utf8'));
    expect(summary.parameters.emissionNm).toEqual([520, 590, 670]);
    expect(summary.parameters.emissionSource).toEqual(['ome-xml', 'ome-xml', 'ome-xml']);
    expect(summary.channels.CD63.emissionNm).toBe(590);
    expect(summary.flPixelNm).toBeCloseTo(65, 6); // PhysicalSizeX in µm (OME default unit)
    const flagged = await runCli([
      '--topography', f('topo.tif'), '--fluorescence', f('ome.tif'), '--fiducials', f('pairs.csv'),
      '--markers', 'CD9,CD63,CD81', '--emission-nm', '500', '--out', f('ome2.csv'), '--summary', f('ome2.json'),
    ]);
    expect(flagged.code).toBe(0);
    const s2 = JSON.parse(await readFile(f('ome2.json'), 'utf8'));
    expect(s2.parameters.emissionNm).toEqual([500, 500, 500]);
    expect(s2.parameters.emissionSource).toEqual(['flag', 'flag', 'flag']);
  });

  it('gives byte-identical CSVs cold (one process per field), in batch and warm (in this process, second call)', async () => {
    const flags = ['--markers', 'CD9,CD63,CD81', '--emission-nm', '520,590,670', '--tip-radius', '8'];
    const cold = await runCli(['--topography', f('topo.tif'), '--fluorescence', f('stack.tif'), '--fiducials', f('pairs.csv'), ...flags, '--out', f('cold.csv')]);
    expect(cold.code).toBe(0);
    await writeFile(f('fields.csv'), 'field,topography,fluorescence,fiducials\n' +
      'f07,topo.tif,stack.tif,pairs.csv\n' +
      'f08,topo.tif,ch0.tif;ch1.tif;ch2.tif,pairs.csv\n' +
      'broken,not-a-tiff.tif,stack.tif,\n' +
      'f09,topo.tif,stack.tif,pairs.csv\n');
    const batch = await runCli(['--batch', f('fields.csv'), '--out-dir', f('out'), ...flags]);
    // one field with bad input: reported, the others written, exit code 2
    expect(batch.code).toBe(2);
    expect(batch.stderr).toMatch(/error: broken: The topography file ".*not-a-tiff\.tif" could not be read as a TIFF/);
    expect(batch.stderr).toMatch(/3 of 4 field\(s\) written .*; not analysed: broken/);
    const settings = {
      markers: ['CD9', 'CD63', 'CD81'], emissionNmGiven: [520, 590, 670], numericalAperture: 1.4, thresholdCountsByMarker: {}, tipRadiusNm: 8,
    };
    const files = { name: 'f07', topography: f('topo.tif'), fluorescence: [f('stack.tif')], fiducials: f('pairs.csv') };
    await analyzeFieldFiles(files, settings, () => undefined);
    const warm = (await analyzeFieldFiles(files, settings, () => undefined)).csv;
    const coldCsv = await readFile(f('cold.csv'), 'utf8');
    expect(coldCsv.split('\n').length).toBeGreaterThan(20);
    expect(await readFile(f('out/f07.csv'), 'utf8')).toBe(coldCsv);
    expect(await readFile(f('out/f08.csv'), 'utf8')).toBe(coldCsv); // one file per channel: the same pages
    expect(await readFile(f('out/f09.csv'), 'utf8')).toBe(coldCsv); // later in the same process
    expect(warm).toBe(coldCsv);
    // with a tip radius the flag column no longer says no_tip_radius
    expect(coldCsv).not.toContain('no_tip_radius');
    const summary = JSON.parse(await readFile(f('out/f07.summary.json'), 'utf8'));
    expect(summary.parameters.tipRadiusNm).toBe(8);
  });

  it('prints the usage with the research-use caution', async () => {
    const run = await runCli(['--help']);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain('Research use only. Not for diagnosis');
    expect(run.stdout).toContain('--tip-radius NM');
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
    ['a bad tip radius', () => [...base(), '--tip-radius', 'wide'], /--tip-radius must be the AFM tip's apex radius in nm/],
    ['a batch file with a bad header', () => ['--batch', f('pairs.csv'), '--out-dir', f('out-bad'), '--markers', 'CD9,CD63,CD81'], /must start with the header field,topography,fluorescence,fiducials/],
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
    expect((await readFile(f('flag.csv'), 'utf8')).split('\n')[1]).toMatch(/^vesicle,x_afm_px,/);
  });
});
