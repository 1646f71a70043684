import { describe, expect, it } from 'vitest';
import type { Affine } from '../../types';
import { decomposeAffine } from '../decomposeAffine';
import { describeAffine } from '../describeAffine';

/** Builds R(θ)·[[sx, h], [0, sy]]·F + t, the documented factorisation (analytic test case). */
function build(thetaDeg: number, sx: number, sy: number, shearDeg: number, mirrored: boolean, tx: number, ty: number): Affine {
  const t = (thetaDeg * Math.PI) / 180;
  const h = sy * Math.tan((shearDeg * Math.PI) / 180);
  const c = Math.cos(t);
  const s = Math.sin(t);
  // R·K
  const a = c * sx;
  let b = c * h - s * sy;
  const d = s * sx;
  let e = s * h + c * sy;
  if (mirrored) {
    b = -b;
    e = -e;
  }
  return [a, b, tx, d, e, ty];
}

describe('decomposeAffine', () => {
  it('recovers rotation, scales, shear, mirror and translation (1e-9: analytic round trip)', () => {
    for (const mirrored of [false, true]) {
      const r = decomposeAffine(build(12.3, 0.482, 0.479, 0.4, mirrored, 10, -3.2));
      expect(r.rotationDeg).toBeCloseTo(12.3, 9);
      expect(r.scaleXPxPerPx).toBeCloseTo(0.482, 9);
      expect(r.scaleYPxPerPx).toBeCloseTo(0.479, 9);
      expect(r.shearDeg).toBeCloseTo(0.4, 9);
      expect(r.mirrored).toBe(mirrored);
      expect(r.translationXPx).toBe(10);
      expect(r.translationYPx).toBe(-3.2);
      expect(Math.abs(r.determinant)).toBeCloseTo(0.482 * 0.479, 12);
    }
  });

  it('calls a map taking +x to +y (down on screen) a 90° clockwise rotation (common practice: image y points down)', () => {
    const r = decomposeAffine([0, -1, 0, 1, 0, 0]);
    expect(r.rotationDeg).toBeCloseTo(90, 12);
    expect(r.mirrored).toBe(false);
    expect(describeAffine([0, -1, 0, 1, 0, 0])).toContain('rotated 90.0° clockwise');
  });

  it('reports a left–right flip as mirrored (a y flip followed by a half turn)', () => {
    const r = decomposeAffine([-1, 0, 0, 0, 1, 0]);
    expect(r.mirrored).toBe(true);
    expect(Math.abs(r.rotationDeg)).toBeCloseTo(180, 12);
    expect(r.scaleXPxPerPx).toBeCloseTo(1, 12);
    expect(r.scaleYPxPerPx).toBeCloseTo(1, 12);
    expect(r.shearDeg).toBeCloseTo(0, 12);
  });
});

describe('describeAffine', () => {
  it('puts the decomposition into words', () => {
    expect(describeAffine(build(12.3, 0.482, 0.479, 0.4, true, 10, -3.2))).toBe(
      'mirrored; rotated 12.3° clockwise; scale 0.482 × 0.479; shear 0.4°; shifted (+10.0, −3.2) px',
    );
    expect(describeAffine(build(-5, 2, 2, 0, false, 0, 0))).toBe(
      'rotated 5.0° anticlockwise; scale 2.00 × 2.00; shear 0.0°; shifted (+0.0, +0.0) px',
    );
  });
});
