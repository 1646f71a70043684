import { describe, it, expect } from 'vitest';
import { choosePixelSize, distrustFilePixelSize } from '../choosePixelSize';
import { inspectTiff, writeTiff } from '../../imaging';

// Pixel size from resolution tags = unit length / XResolution, 1 inch = 2.54e7 nm, 1 cm = 1e7 nm
// (TIFF 6.0 section 8, ResolutionUnit; docs/references.md §10, TIFF 6.0 row).
const tiff = (resolution?: { x: number; y: number; unit: 'inch' | 'centimetre' }) =>
  inspectTiff(writeTiff([{ data: new Float32Array(16), width: 4, height: 4 }], { bitsPerSample: 32, sampleFormat: 'float', resolution }));
const ome = (x: number, y = x) => ({ pixelSizeNm: { x, y }, pixelSizeSource: 'ome-xml' });
const tags = (x: number, y = x) => ({ pixelSizeNm: { x, y }, pixelSizeSource: 'resolution-tags' });
const none = { pixelSizeNm: null, pixelSizeSource: null };

describe('choosePixelSize', () => {
  it('uses a plausible file value when nothing was typed (OME-XML and resolution tags)', () => {
    expect(choosePixelSize('afm', ome(13))).toEqual({ valueNm: 13, source: 'ome-xml', error: null, warnings: [] });
    // 1e7 nm per cm / 153 846.15 px per cm = 65 nm
    const fl = tiff({ x: 1e7 / 65, y: 1e7 / 65, unit: 'centimetre' });
    const c = choosePixelSize('fluorescence', fl);
    expect(c.source).toBe('resolution-tags');
    expect(c.valueNm).toBeCloseTo(65, 4);
    expect(c.warnings).toEqual([]);
  });

  it('a typed value wins over the file, and the disagreement is a warning naming both values', () => {
    const c = choosePixelSize('afm', ome(13), 10);
    expect(c.valueNm).toBe(10);
    expect(c.source).toBe('typed');
    expect(c.warnings).toHaveLength(1);
    expect(c.warnings[0]).toContain('10 nm');
    expect(c.warnings[0]).toContain('13 nm');
    expect(c.warnings[0]).toContain('OME-XML');
  });

  it('a typed value agreeing with the file within 1 % gives no warning', () => {
    expect(choosePixelSize('afm', ome(13), 13.1).warnings).toEqual([]); // 0.77 % apart
    expect(choosePixelSize('afm', ome(13), 13.2).warnings).toHaveLength(1); // 1.5 % apart
  });

  it('refuses a 72 px/inch TIFF (352 778 nm/px) and asks for a typed value, saying why', () => {
    const meta = tiff({ x: 72, y: 72, unit: 'inch' });
    expect(meta.pixelSizeNm!.x).toBeCloseTo(2.54e7 / 72, 3); // 352 777.78 nm
    const c = choosePixelSize('afm', meta);
    expect(c.valueNm).toBeNull();
    expect(c.error).toContain('72 pixels per inch');
    expect(c.error).toContain('never calibrated');
    expect(c.error).toContain('Enter the AFM pixel size in nm');
    // typed: used, with the file's value flagged
    const t = choosePixelSize('afm', meta, 5);
    expect(t.valueNm).toBe(5);
    expect(t.warnings.join(' ')).toContain('uncalibrated');
  });

  it.each([96, 150, 300])('refuses the %i px/inch default, also when written per centimetre', (ppi) => {
    expect(distrustFilePixelSize('fluorescence', tiff({ x: ppi, y: ppi, unit: 'inch' }))).toContain(`${ppi} pixels per inch`);
    // ppi / 2.54 px per cm is the same resolution
    expect(distrustFilePixelSize('fluorescence', tiff({ x: ppi / 2.54, y: ppi / 2.54, unit: 'centimetre' }))).toContain(`${ppi} pixels per inch`);
  });

  it('a non-default resolution near the defaults is judged only by plausibility', () => {
    // 254 000 px/inch = 100 nm: fine for both instruments
    expect(distrustFilePixelSize('afm', tiff({ x: 254000, y: 254000, unit: 'inch' }))).toBeNull();
    // 71 px/inch is not a default but 357 746 nm is implausible
    expect(distrustFilePixelSize('afm', tags(2.54e7 / 71))).toContain('outside the plausible AFM range');
  });

  it('applies the plausible ranges at their bounds (AFM 0.05–2000 nm, fluorescence 10–5000 nm; common practice)', () => {
    expect(choosePixelSize('afm', ome(0.05)).valueNm).toBe(0.05);
    expect(choosePixelSize('afm', ome(2000)).valueNm).toBe(2000);
    expect(choosePixelSize('afm', ome(0.049)).error).toContain('outside the plausible AFM range of 0.05 nm to 2,000 nm');
    expect(choosePixelSize('afm', ome(2001)).valueNm).toBeNull();
    expect(choosePixelSize('fluorescence', ome(10)).valueNm).toBe(10);
    expect(choosePixelSize('fluorescence', ome(5000)).valueNm).toBe(5000);
    expect(choosePixelSize('fluorescence', ome(9.9)).error).toContain('10 nm to 5,000 nm');
    expect(choosePixelSize('fluorescence', tags(5001)).valueNm).toBeNull();
  });

  it('a file without a pixel size needs a typed value', () => {
    const c = choosePixelSize('fluorescence', tiff());
    expect(c).toEqual({ valueNm: null, source: null, error: 'The fluorescence file does not state its pixel size. Enter the fluorescence pixel size in nm.', warnings: [] });
    expect(choosePixelSize('fluorescence', none, 65)).toEqual({ valueNm: 65, source: 'typed', error: null, warnings: [] });
  });

  it('warns when X and Y pixel sizes differ by more than 1 %, and uses X', () => {
    // 1e5 and 5e4 px/cm → 100 and 200 nm
    const c = choosePixelSize('fluorescence', tiff({ x: 1e5, y: 5e4, unit: 'centimetre' }));
    expect(c.valueNm).toBeCloseTo(100, 9);
    expect(c.warnings).toHaveLength(1);
    expect(c.warnings[0]).toMatch(/not square \(X 100 nm, Y 200 nm\).*the X value/);
    expect(choosePixelSize('afm', ome(10, 10.09)).warnings).toEqual([]); // 0.9 % apart
    expect(choosePixelSize('afm', ome(10, 10.11)).warnings).toHaveLength(1); // 1.1 % apart
  });
});
