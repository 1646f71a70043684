import bessel from 'bessel';
import { describe, expect, it } from 'vitest';
import { createRng } from '../random';
import { makeCorrelativeScene } from '../makeCorrelativeScene';
import { renderCorrelativeChannel } from '../renderCorrelativeChannel';
import { tipImagedProfile } from '../tipImagedProfile';

const cap = (a: number, h: number) => {
  const rc = (a * a + h * h) / (2 * h);
  return (u: number) => Math.sqrt(Math.max(0, rc * rc - u * u)) - (rc - h);
};
const halfWidth = (heights: Float64Array, stepNm: number) => {
  let i = heights.length - 1;
  while (i > 0 && heights[i] <= 0) i--;
  return (i + 1) * stepNm;
};
const noCamera = { offsetCounts: 0, gainCountsPerPhoton: 1, readNoiseCounts: 0 };

describe('tipImagedProfile', () => {
  it('broadens a cap to a′ = √(a² + 2hR) and keeps its height', () => {
    // docs/references.md §3: a = 50, h = 20, R = 10 → a′ = 53.85 nm; the apex height is unchanged.
    const p = tipImagedProfile(cap(50, 20), 50, { radiusNm: 10, halfAngleDeg: 20 }, 0.05);
    expect(Math.abs(halfWidth(p.heightsNm, p.stepNm) - 53.85)).toBeLessThanOrEqual(0.06); // grid step 0.05 nm
    expect(p.heightsNm[0]).toBeCloseTo(20, 6);
  });

  it('images a sphere smaller than the tip with the width 4√(Rr)', () => {
    // docs/references.md §3: sphere of radius r = 3 nm on a flat surface, ball R = 20 nm → W/2 = 2√(Rr) = 15.49 nm
    // (the cone, tangent at R·cos 20° = 18.8 nm from the axis, is not reached). Height 2r is kept.
    const r = 3;
    const p = tipImagedProfile((u) => r + Math.sqrt(Math.max(0, r * r - u * u)), r, { radiusNm: 20, halfAngleDeg: 20 }, 0.01);
    expect(halfWidth(p.heightsNm, p.stepNm)).toBeCloseTo(2 * Math.sqrt(20 * r), 1);
    expect(p.heightsNm[0]).toBeCloseTo(2 * r, 6);
  });

  it('is bounded below by the true surface (the tip never goes under it)', () => {
    const s = cap(40, 25);
    const p = tipImagedProfile(s, 40, { radiusNm: 8, halfAngleDeg: 20 }, 0.5);
    for (let i = 0; i * 0.5 <= 40; i++) expect(p.heightsNm[i]).toBeGreaterThanOrEqual(s(i * 0.5) - 1e-9);
  });
});

describe('renderCorrelativeChannel', () => {
  const base = {
    widthPx: 96, heightPx: 96, emissionNm: 600, numericalAperture: 1.4, pixelSizeNm: 65, widthFactor: 1.15,
    backgroundPhotonsPerPx: 0, backgroundSlopePerPx: { x: 0, y: 0 },
  } as const;

  it('keeps the Airy encircled energy 1 − J0²(v) − J1²(v) of each emitter', () => {
    // Encircled energy of the Airy pattern inside v: 1 − J0²(v) − J1²(v) (docs/references.md §4, Born & Wolf); the
    // textbook value inside the first dark ring (v = 3.8317) is 83.8 %. Sub-pixel sampling adds < 0.5 % error.
    const r = renderCorrelativeChannel({ ...base, psf: 'airy', emitters: [{ x: 47.3, y: 48.6, photons: 1e5 }], camera: noCamera, rng: createRng(1) });
    const j0 = bessel.besselj(20, 0);
    const j1 = bessel.besselj(20, 1);
    expect(r.enclosedFraction).toBeCloseTo(1 - j0 * j0 - j1 * j1, 10);
    const firstRing = 1 - bessel.besselj(3.8317, 0) ** 2 - bessel.besselj(3.8317, 1) ** 2;
    expect(firstRing).toBeCloseTo(0.838, 3);
    let sum = 0;
    for (const v of r.expectedPhotons.data) sum += v;
    expect(Math.abs(sum / 1e5 - r.enclosedFraction)).toBeLessThan(0.005);
  });

  it('puts the Airy first dark ring at v = 3.8317 (r = 0.61 λ/NA, stretched)', () => {
    // docs/references.md §4: Rayleigh radius 0.61λ/NA; first zero of J1 at 3.8317. With widthFactor 1.15 the ring
    // sits at 1.15·0.61·600/1.4/65 = 4.63 px; the profile along x has its minimum there (± 0.3 px, pixel sampling).
    const r = renderCorrelativeChannel({ ...base, widthPx: 41, heightPx: 41, psf: 'airy', widthFactor: 1.15, emitters: [{ x: 20, y: 20, photons: 1e6 }], camera: noCamera, rng: createRng(1) });
    const row = Array.from({ length: 9 }, (_, k) => r.expectedPhotons.data[20 * 41 + 20 + k]);
    let kMin = 1;
    while (kMin + 1 < row.length && row[kMin + 1] < row[kMin]) kMin++; // first local minimum
    const expectedPx = (1.15 * 3.8317 * 600) / (2 * Math.PI * 1.4 * 65);
    expect(expectedPx).toBeCloseTo((1.15 * 0.61 * 600) / 1.4 / 65, 2);
    expect(Math.abs(kMin - expectedPx)).toBeLessThan(0.7);
  });

  it('keeps every photon of the Gaussian and applies the camera model (mean gain·b + offset, variance gain²·b + read²)', () => {
    // Camera: counts = gain·Poisson(b) + offset + N(0, read²) → mean = gain·b + offset, variance = gain²·b + read²
    // (shot noise plus read noise; common practice, EMVA 1288 from memory). n = 65 536: SE of the mean 0.017, of the
    // variance ~0.6 %; checked to 0.2 counts and 3 %.
    const g = renderCorrelativeChannel({ ...base, psf: 'gaussian', emitters: [{ x: 47.3, y: 48.6, photons: 1e4 }], camera: noCamera, rng: createRng(2) });
    let sum = 0;
    for (const v of g.expectedPhotons.data) sum += v;
    expect(sum).toBeCloseTo(1e4, 0);
    const cam = { offsetCounts: 100, gainCountsPerPhoton: 1.8, readNoiseCounts: 2 };
    const flat = renderCorrelativeChannel({ ...base, widthPx: 256, heightPx: 256, psf: 'gaussian', backgroundPhotonsPerPx: 100, emitters: [], camera: cam, rng: createRng(3) });
    const d = flat.raster.data;
    let m = 0;
    for (const v of d) m += v;
    m /= d.length;
    let v2 = 0;
    for (const v of d) v2 += (v - m) ** 2;
    v2 /= d.length - 1;
    expect(m).toBeCloseTo(1.8 * 100 + 100, 0);
    // rounding to integers adds 1/12 count² (uniform quantisation)
    expect(v2 / (1.8 * 1.8 * 100 + 4 + 1 / 12)).toBeGreaterThan(0.97);
    expect(v2 / (1.8 * 1.8 * 100 + 4 + 1 / 12)).toBeLessThan(1.03);
  });
});

describe('makeCorrelativeScene', () => {
  const sparse = makeCorrelativeScene({ seed: 11 });

  it('is reproducible from its seed', () => {
    const again = makeCorrelativeScene({ seed: 11 });
    const other = makeCorrelativeScene({ seed: 12 });
    expect(again.heightNm.data).toEqual(sparse.heightNm.data);
    expect(again.channels[2].raster.data).toEqual(sparse.channels[2].raster.data);
    expect(again.vesicles).toEqual(sparse.vesicles);
    expect(other.vesicles[0].afmPx).not.toEqual(sparse.vesicles[0].afmPx);
  });

  it('draws caps whose imaged volume exceeds the cap volume πh(3a² + h²)/6 by the tip broadening only', () => {
    // docs/references.md §2 (cap volume). With a near-ideal tip (R = 0.01 nm, 5° cone) the raster volume of each
    // isolated vesicle equals the cap volume to 3 % (10 nm pixels, 3×3 sub-samples); with the 8 nm tip it is larger.
    const s = makeCorrelativeScene({ seed: 5, tipRadiusNm: 0.01, tipHalfAngleDeg: 5, nbBeads: 0, nbBeadsOutsideAfm: 0, nbVesiclesOutsideAfm: 0, nbVesicles: 20 });
    const t = s.topographyNm;
    for (const v of s.vesicles) {
      const a = v.baseRadiusNm;
      const h = v.heightNm;
      expect(v.contactAngleDeg).toBeCloseTo((2 * Math.atan(h / a) * 180) / Math.PI, 6);
      const rPx = v.imagedHalfWidthNm / s.afmPixelNm + 1.5;
      let vol = 0;
      for (let y = Math.floor(v.afmPx.y - rPx); y <= Math.ceil(v.afmPx.y + rPx); y++) {
        for (let x = Math.floor(v.afmPx.x - rPx); x <= Math.ceil(v.afmPx.x + rPx); x++) vol += t.data[y * t.width + x];
      }
      vol *= s.afmPixelNm ** 2;
      expect(vol / ((Math.PI * h * (3 * a * a + h * h)) / 6)).toBeCloseTo(1, 1);
      expect(Math.abs(vol / ((Math.PI * h * (3 * a * a + h * h)) / 6) - 1)).toBeLessThan(0.03);
    }
  });

  it('reports tip-broadened half-widths a′ = √(a² + 2hR) for every vesicle of flattened shape', () => {
    // docs/references.md §3; the cone (20°) is not reached by caps below 70° contact angle. Profile step 0.5 nm.
    for (const v of sparse.vesicles) {
      expect(Math.abs(v.imagedHalfWidthNm - Math.sqrt(v.baseRadiusNm ** 2 + 2 * v.heightNm * 8))).toBeLessThan(0.6);
    }
  });

  it('holds 100–200 nm beads bright in every channel, vesicles of plausible EV height, and the stated populations', () => {
    // EV heights in air ≈ 5–30 nm, up to ~50 nm here (docs/references.md §9); beads 100–200 nm (§9).
    expect(sparse.beads.length).toBe(9);
    for (const b of sparse.beads) {
      expect(b.heightNm).toBeGreaterThanOrEqual(100);
      expect(b.heightNm).toBeLessThanOrEqual(200);
      for (const c of sparse.channels) expect(b.photonsByMarker[c.marker]).toBeGreaterThanOrEqual(6000);
    }
    for (const v of sparse.vesicles) {
      expect(v.heightNm).toBeGreaterThan(4);
      expect(v.heightNm).toBeLessThan(50);
      for (const c of sparse.channels) {
        const p = v.photonsByMarker[c.marker];
        expect(v.labels[c.marker] ? p >= 300 && p <= 2000 : p === 0).toBe(true);
      }
    }
    const inField = sparse.vesicles.filter((v) => v.inAfmField);
    expect(inField.length).toBe(60);
    expect(sparse.vesicles.length - inField.length).toBe(40);
    expect(inField.some((v) => !v.inFrameByMarker.CD9)).toBe(true);
    expect(sparse.vesicles.some((v) => Object.values(v.labels).every((l) => !l))).toBe(true);
    expect(sparse.emitters.filter((e) => e.kind === 'dim').every((e) => e.photons >= 60 && e.photons <= 250)).toBe(true);
    // every emitter keeps 250 nm from every vesicle of its channel
    for (const e of sparse.emitters) {
      for (const v of sparse.vesicles) {
        const p = v.flPxByMarker[e.marker];
        expect(Math.hypot(p.x - e.flPx.x, p.y - e.flPx.y) * 65).toBeGreaterThanOrEqual(250 - 1e-6);
      }
    }
  });

  it('shifts channel c by c × the chromatic shift and jitters the picks by tens of nm', () => {
    const s = makeCorrelativeScene({ seed: 4, chromaticShiftNmPerChannel: 70 });
    for (const v of s.vesicles.slice(0, 5)) {
      const p0 = v.flPxByMarker.CD9;
      const p2 = v.flPxByMarker.CD81;
      expect(Math.hypot(p2.x - p0.x, p2.y - p0.y) * s.flPixelNm).toBeCloseTo(140, 6);
    }
    expect(s.fiducialPicks.length).toBeGreaterThanOrEqual(4);
    s.fiducialPicks.forEach((pick, k) => {
      const b = s.beads[s.pickBeadIndices[k]];
      const dNm = Math.hypot(pick.afm.x - b.afmPx.x, pick.afm.y - b.afmPx.y) * s.afmPixelNm;
      expect(dNm).toBeLessThan(150); // 30 nm SD per axis: 150 nm is beyond 4.9 SD of the radial error
    });
  });

  it('places half of a crowded field in pairs closer than the PSF FWHM', () => {
    // Gaussian FWHM = 2.355σ, σ = 0.21λ/NA (docs/references.md §4), rendered 15 % wider: 520 nm, NA 1.4 → 211 nm.
    const s = makeCorrelativeScene({ seed: 6, layout: 'crowded' });
    const paired = s.vesicles.filter((v) => v.closePartner !== null);
    expect(paired.length).toBe(64);
    for (const v of paired) {
      const w = s.vesicles[v.closePartner!];
      const dNm = Math.hypot(v.afmPx.x - w.afmPx.x, v.afmPx.y - w.afmPx.y) * s.afmPixelNm;
      expect(dNm).toBeLessThan((2.355 * 0.21 * 520 * 1.15) / 1.4);
      expect(dNm).toBeGreaterThan(v.imagedHalfWidthNm + w.imagedHalfWidthNm);
    }
  });
});
