import { describe, expect, it } from 'vitest';
import { decodeTiff } from '../decodeTiff';
import { ImagingError } from '../errors';
import { inspectTiff } from '../inspectTiff';
import { writeTiff } from '../writeTiff';
import { entry, ifdOffsets, nextPointerAt, setInline, view } from './tiffBytes';

const small = (opts: Partial<Parameters<typeof writeTiff>[1]> = {}): Uint8Array =>
  writeTiff([{ data: [1, 2, 3, 4, 5, 6], width: 3, height: 2 }], { bitsPerSample: 16, sampleFormat: 'uint', ...opts });

const ome = (pixelsAttrs: string): string => `<?xml version="1.0" encoding="UTF-8"?>
<OME xmlns="http://www.openmicroscopy.org/Schemas/OME/2016-06">
  <Image ID="Image:0" Name="field 1">
    <Pixels ID="Pixels:0" DimensionOrder="XYCZT" Type="uint16" SizeX="3" SizeY="2" SizeZ="1" SizeC="1" SizeT="1" ${pixelsAttrs}>
      <Channel ID="Channel:0:0" Name="CD63" SamplesPerPixel="1"/>
      <TiffData IFD="0" PlaneCount="1"/>
    </Pixels>
  </Image>
</OME>`;

/** Runs fn and returns the ImagingError it throws (fails the test for any other outcome). */
function codeOf(fn: () => unknown): { code: string; message: string } {
  try {
    fn();
  } catch (err) {
    expect(err).toBeInstanceOf(ImagingError);
    return err as ImagingError;
  }
  throw new Error('expected an ImagingError, nothing was thrown');
}

describe('inspectTiff: structure', () => {
  it('reads size, sample type, compression and page count without decoding', () => {
    const file = writeTiff(
      [0, 1].map(() => ({ data: new Array(40 * 30).fill(7), width: 40, height: 30 })),
      { bitsPerSample: 32, sampleFormat: 'float', compression: 'lzw' },
    );
    const meta = inspectTiff(file);
    expect(meta).toMatchObject({
      width: 40, height: 30, bitsPerSample: 32, sampleFormat: 'float', samplesPerPixel: 1,
      compression: 'LZW', pageCount: 2, bigTiff: false, byteOrder: 'little-endian',
    });
    // decodedBytes = Σ w·h·(bytes per sample + 4): geotiff's array plus our Float32 copy
    expect(meta.decodedBytes).toBe(2 * 40 * 30 * (4 + 4));
  });
});

describe('inspectTiff: pixel size in nm', () => {
  it('OME-XML PhysicalSizeX/Y without unit → µm, the OME schema default (OME schema 2016-06)', () => {
    const meta = inspectTiff(small({ imageDescription: ome('PhysicalSizeX="0.065" PhysicalSizeY="0.08"') }));
    expect(meta.pixelSizeSource).toBe('ome-xml');
    // 0.065 µm = 65 nm; tolerance 1e-9 nm covers float64 rounding of the decimal
    expect(meta.pixelSizeNm!.x).toBeCloseTo(65, 9);
    expect(meta.pixelSizeNm!.y).toBeCloseTo(80, 9);
  });

  it('OME-XML with PhysicalSizeXUnit="nm" (OME UnitsLength)', () => {
    const meta = inspectTiff(small({
      imageDescription: ome('PhysicalSizeX="7.8125" PhysicalSizeXUnit="nm" PhysicalSizeY="7.8125" PhysicalSizeYUnit="nm"'),
    }));
    expect(meta.pixelSizeNm).toEqual({ x: 7.8125, y: 7.8125 });
  });

  it('OME-XML in metres, e.g. 4.2e-06 m (docs/references.md §10 example) → 4200 nm', () => {
    const meta = inspectTiff(small({
      imageDescription: ome('PhysicalSizeX="4.2e-06" PhysicalSizeXUnit="m" PhysicalSizeY="4.2e-06" PhysicalSizeYUnit="m"'),
    }));
    expect(meta.pixelSizeNm!.x).toBeCloseTo(4200, 9);
    expect(meta.pixelSizeNm!.y).toBeCloseTo(4200, 9);
  });

  it('OME-XML unit written as an XML character reference (&#181;m = µm, XML 1.0 section 4.1)', () => {
    const meta = inspectTiff(small({
      imageDescription: ome('PhysicalSizeX="0.1" PhysicalSizeXUnit="&#181;m" PhysicalSizeY="0.1" PhysicalSizeYUnit="&#181;m"'),
    }));
    expect(meta.pixelSizeNm!.x).toBeCloseTo(100, 9);
  });

  it('OME-XML with a non-length unit ("pixel") gives no pixel size and a warning', () => {
    const meta = inspectTiff(small({ imageDescription: ome('PhysicalSizeX="1" PhysicalSizeXUnit="pixel" PhysicalSizeY="1" PhysicalSizeYUnit="pixel"') }));
    expect(meta.pixelSizeNm).toBeNull();
    expect(meta.warnings.join(' ')).toContain('"pixel"');
  });

  it('XResolution 1e5 px/cm with ResolutionUnit 3 → 100 nm (TIFF 6.0 section 8: ResolutionUnit 3 = centimetre)', () => {
    const meta = inspectTiff(small({ resolution: { x: 1e5, y: 5e4, unit: 'centimetre' } }));
    expect(meta.pixelSizeSource).toBe('resolution-tags');
    expect(meta.pixelSizeNm).toEqual({ x: 100, y: 200 });
  });

  it('XResolution 254000 px/inch with ResolutionUnit 2 → 100 nm (TIFF 6.0 section 8: 2 = inch; 1 inch = 25.4 mm)', () => {
    const meta = inspectTiff(small({ resolution: { x: 254000, y: 254000, unit: 'inch' } }));
    // tolerance 1e-9 nm: 2.54e7 / 254000 in float64
    expect(meta.pixelSizeNm!.x).toBeCloseTo(100, 9);
  });

  it('ResolutionUnit absent → inch, the TIFF 6.0 default (section 8)', () => {
    const file = small({ resolution: { x: 254000, y: 254000, unit: 'centimetre' } });
    const copy = file.slice();
    view(copy).setUint16(entry(copy, 296).at, 65000, true); // rename the tag so ResolutionUnit is missing
    expect(inspectTiff(copy).pixelSizeNm!.x).toBeCloseTo(100, 9);
  });

  it('ResolutionUnit 1 (no absolute unit, TIFF 6.0 section 8) → no pixel size', () => {
    const meta = inspectTiff(small({ resolution: { x: 1e5, y: 1e5, unit: 'none' } }));
    expect(meta.pixelSizeNm).toBeNull();
    expect(meta.pixelSizeSource).toBeNull();
  });

  it('no resolution tags and no OME-XML → null', () => {
    expect(inspectTiff(small()).pixelSizeNm).toBeNull();
  });

  it('72 px/inch gives a size but warns that it is a common uncalibrated default (common practice)', () => {
    const meta = inspectTiff(small({ resolution: { x: 72, y: 72, unit: 'inch' } }));
    expect(meta.pixelSizeNm!.x).toBeCloseTo(2.54e7 / 72, 6);
    expect(meta.warnings.join(' ')).toContain('72 pixels per inch');
  });

  it('OME-XML wins over resolution tags', () => {
    const meta = inspectTiff(small({
      imageDescription: ome('PhysicalSizeX="50" PhysicalSizeXUnit="nm" PhysicalSizeY="50" PhysicalSizeYUnit="nm"'),
      resolution: { x: 1e5, y: 1e5, unit: 'centimetre' },
    }));
    expect(meta.pixelSizeNm).toEqual({ x: 50, y: 50 });
  });
});

describe('inspectTiff: emission wavelength per OME-XML channel', () => {
  const withChannels = (channels: string) => `<OME xmlns="http://www.openmicroscopy.org/Schemas/OME/2016-06"><Image ID="Image:0">` +
    `<Pixels ID="Pixels:0" DimensionOrder="XYCZT" Type="uint16" SizeX="3" SizeY="2" SizeZ="1" SizeC="4" SizeT="1">${channels}` +
    `<TiffData IFD="0"/></Pixels></Image></OME>`;

  it('reads Channel@EmissionWavelength, unit attribute default nm, other units converted (OME schema 2016-06)', () => {
    const meta = inspectTiff(small({
      imageDescription: withChannels(
        '<Channel ID="Channel:0:0" EmissionWavelength="520"/>' +
          '<Channel ID="Channel:0:1" EmissionWavelength="0.59" EmissionWavelengthUnit="&#181;m"></Channel>' +
          '<Channel ID="Channel:0:2" Name="no emission"/>' +
          '<Channel ID="Channel:0:3" EmissionWavelength="6700" EmissionWavelengthUnit="Å"/>',
      ),
    }));
    // 0.59 µm = 590 nm, 6700 Å = 670 nm (SI factors); tolerance 1e-9 covers float64 rounding of the decimals
    expect(meta.channelEmissionNm).toHaveLength(4);
    expect(meta.channelEmissionNm[0]).toBe(520);
    expect(meta.channelEmissionNm[1]).toBeCloseTo(590, 9);
    expect(meta.channelEmissionNm[2]).toBeNull();
    expect(meta.channelEmissionNm[3]).toBeCloseTo(670, 9);
    expect(meta.warnings).toEqual([]);
  });

  it('ignores a non-positive value or an unknown unit with a warning, and gives [] without OME-XML', () => {
    const meta = inspectTiff(small({
      imageDescription: withChannels('<Channel ID="Channel:0:0" EmissionWavelength="-5"/><Channel ID="Channel:0:1" EmissionWavelength="600" EmissionWavelengthUnit="Hz"/>'),
    }));
    expect(meta.channelEmissionNm).toEqual([null, null]);
    expect(meta.warnings.join(' ')).toMatch(/emission wavelength of channel 1 \("-5"\) is not a positive number/);
    expect(meta.warnings.join(' ')).toMatch(/unit "Hz" of channel 2 is not a length/);
    expect(inspectTiff(small({ imageDescription: 'a plain description' })).channelEmissionNm).toEqual([]);
  });
});

describe('inspectTiff and decodeTiff: every bad input gives its code', () => {
  it('not_tiff: PNG signature, text, empty file', () => {
    const png = Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0]);
    expect(codeOf(() => inspectTiff(png)).code).toBe('not_tiff');
    expect(codeOf(() => inspectTiff(new TextEncoder().encode('height,x,y\n1,2,3\n'))).code).toBe('not_tiff');
    expect(codeOf(() => inspectTiff(new Uint8Array(0))).code).toBe('not_tiff');
    // TIFF 6.0 section 2: bytes 2-3 must be 42; II with 41 is not TIFF
    expect(codeOf(() => inspectTiff(Uint8Array.from([0x49, 0x49, 41, 0, 8, 0, 0, 0]))).code).toBe('not_tiff');
  });

  it('truncated: file cut inside the pixel data, inside the header, or IFD offset past the end', () => {
    const file = writeTiff([{ data: new Array(64 * 64).fill(9), width: 64, height: 64 }], { bitsPerSample: 16, sampleFormat: 'uint' });
    const cutHeader = file.slice(0, 6);
    const e1 = codeOf(() => inspectTiff(cutHeader));
    expect(e1.code).toBe('truncated');
    expect(e1.message).toBe('The file ends before the image directory it declares: it may be truncated (an interrupted copy or upload). Upload it again.');
    const pastEnd = file.slice();
    view(pastEnd).setUint32(4, file.length + 10, true);
    expect(codeOf(() => inspectTiff(pastEnd)).code).toBe('truncated');
    // strip offset pointing near the end so its byte count runs past the end of the file
    const shortStrip = setInline(file, 273, file.length - 100);
    expect(codeOf(() => inspectTiff(shortStrip)).code).toBe('truncated');
  });

  it('corrupt: IFD chain that loops back to itself or to an earlier page', () => {
    const one = small();
    const loop = one.slice();
    view(loop).setUint32(nextPointerAt(loop, 0), ifdOffsets(loop)[0], true);
    const e = codeOf(() => inspectTiff(loop));
    expect(e.code).toBe('corrupt');
    expect(e.message).toContain('loops back');
    const three = writeTiff([1, 2, 3].map((v) => ({ data: [v], width: 1, height: 1 })), { bitsPerSample: 8, sampleFormat: 'uint' });
    view(three).setUint32(nextPointerAt(three, 2), ifdOffsets(three)[1], true);
    expect(codeOf(() => inspectTiff(three)).code).toBe('corrupt');
  });

  it('corrupt: IFD inside the header, empty IFD, zero width, missing strip offsets', () => {
    const intoHeader = small();
    view(intoHeader).setUint32(4, 2, true);
    expect(codeOf(() => inspectTiff(intoHeader)).code).toBe('corrupt');
    const empty = small();
    view(empty).setUint16(ifdOffsets(empty)[0], 0, true);
    expect(codeOf(() => inspectTiff(empty)).code).toBe('corrupt');
    expect(codeOf(() => inspectTiff(setInline(small(), 256, 0))).code).toBe('corrupt');
    const noStrips = small();
    view(noStrips).setUint16(entry(noStrips, 273).at, 65001, true);
    expect(codeOf(() => inspectTiff(noStrips)).code).toBe('corrupt');
  });

  it('unsupported_compression: JPEG (7) is named, unknown codes are reported by number', () => {
    const jpeg = codeOf(() => inspectTiff(setInline(small(), 259, 7)));
    expect(jpeg.code).toBe('unsupported_compression');
    expect(jpeg.message).toBe('Image 1 uses JPEG compression, which Heightlight cannot read. Save it again uncompressed or with LZW or Deflate compression.');
    const unknown = codeOf(() => inspectTiff(setInline(small(), 259, 12345)));
    expect(unknown.code).toBe('unsupported_compression');
    expect(unknown.message).toContain('code 12345');
    // Predictor values other than 1, 2 (TIFF 6.0 section 14) and 3 (Adobe floating point) are refused too
    const file = small({ compression: 'lzw' });
    const copy = file.slice();
    const dv = view(copy);
    const e = entry(copy, 284);
    dv.setUint16(e.at, 317, true);
    dv.setUint16(e.at + 8, 9, true);
    expect(codeOf(() => inspectTiff(copy)).code).toBe('unsupported_compression');
  });

  it('bad_sample_format: SampleFormat 4 (undefined), 12-bit, 16-bit float, 3 samples per pixel, palette', () => {
    // TIFF 6.0 section 19: SampleFormat 1 uint, 2 int, 3 IEEE float, 4 undefined
    expect(codeOf(() => inspectTiff(setInline(small(), 339, 4))).code).toBe('bad_sample_format');
    expect(codeOf(() => inspectTiff(setInline(small(), 258, 12))).code).toBe('bad_sample_format');
    const f16 = setInline(setInline(small(), 339, 3), 258, 16);
    expect(codeOf(() => inspectTiff(f16)).message).toContain('16-bit floating-point');
    const rgb = codeOf(() => inspectTiff(setInline(small(), 277, 3)));
    expect(rgb.code).toBe('bad_sample_format');
    expect(rgb.message).toContain('3 values per pixel');
    // TIFF 6.0 section 5: PhotometricInterpretation 3 = palette colour
    expect(codeOf(() => inspectTiff(setInline(small(), 262, 3))).message).toContain('palette');
  });

  it('decodeTiff rejects with the same ImagingError codes', async () => {
    await expect(decodeTiff(setInline(small(), 259, 7))).rejects.toMatchObject({ code: 'unsupported_compression' });
    await expect(decodeTiff(new Uint8Array(3))).rejects.toBeInstanceOf(ImagingError);
  });
});

describe('limits are enforced before decoding', () => {
  it('a header declaring 100000 × 100000 pixels is rejected with too_large before its pixel blocks are looked at', () => {
    const file = setInline(setInline(small(), 256, 100000), 257, 100000);
    const e = codeOf(() => inspectTiff(file));
    expect(e.code).toBe('too_large');
    expect(e.message).toContain('100000 × 100000 pixels');
    // the size check comes before the strips are read: a strip offset past the end of the file, which alone
    // is 'truncated', does not change the answer (no test of speed here: that is for benchmarks)
    expect(codeOf(() => inspectTiff(setInline(small(), 273, 10_000)))).toMatchObject({ code: 'truncated' });
    expect(codeOf(() => inspectTiff(setInline(file, 273, 10_000)))).toMatchObject({ code: 'too_large' });
  });

  it('maxDecodedBytes counts every page; maxPages bounds the IFD chain; maxFileBytes the input', async () => {
    const stack = writeTiff([0, 1, 2].map(() => ({ data: new Array(100 * 100).fill(1), width: 100, height: 100 })), { bitsPerSample: 16, sampleFormat: 'uint' });
    // 3 pages × 100 × 100 × (2 + 4) bytes = 180 000 bytes
    expect(inspectTiff(stack, { maxDecodedBytes: 180_000 }).pageCount).toBe(3);
    expect(codeOf(() => inspectTiff(stack, { maxDecodedBytes: 179_999 })).code).toBe('too_large');
    await expect(decodeTiff(stack, { maxDecodedBytes: 179_999 })).rejects.toMatchObject({ code: 'too_large' });
    expect(codeOf(() => inspectTiff(stack, { maxPages: 2 })).code).toBe('too_large');
    expect(codeOf(() => inspectTiff(stack, { maxPixels: 9_999 })).code).toBe('too_large');
    expect(codeOf(() => inspectTiff(stack, { maxFileBytes: stack.length - 1 })).code).toBe('too_large');
  });
});
