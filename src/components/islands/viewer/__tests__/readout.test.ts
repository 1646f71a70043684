import { describe, it, expect } from 'vitest';
import { readoutText, type ReadoutLayer } from '../readout';

// an invented 8 × 6 px height map at 20 nm per pixel, its read-out averaged over 2 × 2 blocks (4 × 3 values)
const height: ReadoutLayer = { layer: 'height', name: 'height', widthPx: 8, heightPx: 6, valuesFactor: 2, valuesWidth: 4 };
const heightValues = Float32Array.from({ length: 12 }, (_, i) => i + 0.125);

describe('readoutText', () => {
  it('gives the position in µm and pixels and the stored value of the block under the pointer', () => {
    // pixel (5, 3): block (2, 1), value index 1·4 + 2 = 6 → 6.125 nm; 5 × 20 nm = 0.100 µm, 3 × 20 nm = 0.060 µm
    expect(readoutText({ x: 5.2, y: 2.8 }, [height], { height: heightValues }, 20))
      .toBe('x 0.104 µm, y 0.056 µm (pixel 5, 3) · height 6.13 nm');
  });

  it('names each channel by its marker and rounds counts', () => {
    const ch1: ReadoutLayer = { layer: 'ch1', name: 'CD63', widthPx: 4, heightPx: 4, valuesFactor: 1, valuesWidth: 4 };
    const ch2: ReadoutLayer = { ...ch1, layer: 'ch2', name: 'CD9' };
    const ones = new Float32Array(16).fill(0);
    ones[1 * 4 + 3] = 812.6;
    // ch2 has no read-out loaded yet: no value, no error
    expect(readoutText({ x: 3, y: 1 }, [ch1, ch2], { ch1: ones }, 65)).toBe('x 0.195 µm, y 0.065 µm (pixel 3, 1) · CD63 813 counts');
  });

  it('says so outside the image, half a pixel past the edge pixels', () => {
    expect(readoutText({ x: -0.6, y: 0 }, [height], {}, 20)).toBe('Outside the image');
    expect(readoutText({ x: 7.6, y: 0 }, [height], {}, 20)).toBe('Outside the image');
    // pixel i covers [i − 0.5, i + 0.5): 7.5 is past the last pixel (it once read a value beyond the read-out)
    expect(readoutText({ x: 7.5, y: 5.4 }, [height], { height: heightValues }, 20)).toBe('Outside the image');
    expect(readoutText({ x: 7.4, y: 5.4 }, [height], { height: heightValues }, 20)).toBe('x 0.148 µm, y 0.108 µm (pixel 7, 5) · height 11.13 nm');
    expect(readoutText({ x: 0, y: 0 }, [], {}, 20)).toBe('Outside the image');
  });
});
