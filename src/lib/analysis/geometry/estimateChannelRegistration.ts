import { median } from 'simple-statistics';
import type { Affine, Point, Raster } from '../types';
import { fitBeadSpots, type BeadSpotFit } from './fitBeadSpots';

/** A bead as the AFM sees it. */
export interface RegistrationBead {
  /** Centre (AFM px). */
  readonly afmPx: Point;
  /** Bead diameter (nm): its AFM height. */
  readonly diameterNm: number;
}

/** One channel for {@link estimateChannelRegistration}. */
export interface RegistrationChannel {
  readonly marker: string;
  /** Raw frame (counts). */
  readonly raster: Raster;
  /** PSF sigma the optics predict (px): the fit's start. */
  readonly sigmaPx: number;
}

/** Options of {@link estimateChannelRegistration}. */
export interface EstimateChannelRegistrationOptions {
  /** Fluorescence pixel size (nm/px). */
  flPixelNm: number;
  /** Fewer beads fitted in a channel than this: the channel keeps the common transform. @default 3 */
  minBeads?: number;
  /** Bead images whose peak is below this many background SDs are not used. @default 10 */
  minPeakSnr?: number;
  /** How far a bead image may lie from where the common transform puts it (px). @default 3 */
  maxShiftPx?: number;
}

/** One channel's refinement of the common AFM → fluorescence transform. */
export interface ChannelRegistration {
  /** Translation added to the common transform for this channel (fluorescence px); zero when it fell back. */
  readonly offsetFlPx: Point;
  /** This channel's AFM px → fluorescence px: the common transform followed by offsetFlPx. */
  readonly flFromAfm: Affine;
  /**
   * PSF sigma measured on the beads (px), with the bead's size and the pixel width removed; null with too few beads
   * or when it is implausible (outside 0.6–1.6× the optics' prediction).
   */
  readonly psfSigmaPx: number | null;
  /** Beads fitted in this channel and used. */
  readonly nbBeads: number;
  /** 'beads' when estimated, 'common' when too few beads were seen (offset 0, PSF from the optics). */
  readonly source: 'beads' | 'common';
  /** RMS of the bead offsets about their mean (nm); null with fewer than 2 beads. */
  readonly offsetScatterNm: number | null;
}

/** Result of {@link estimateChannelRegistration}. */
export interface EstimateChannelRegistrationResult {
  readonly channels: Readonly<Record<string, ChannelRegistration>>;
  /** Per channel, per bead (input order): the fitted image, or null. */
  readonly fitsByMarker: Readonly<Record<string, readonly (BeadSpotFit | null)[]>>;
  /** One sentence per channel that fell back to the common transform. */
  readonly warnings: readonly string[];
}

/**
 * Refine a common AFM → fluorescence transform per channel from multicolour beads (bright in every channel):
 * fit each bead's image in each channel near where the common transform puts it, take the mean offset (after
 * dropping offsets more than 1 px from the median) as that channel's translation, a lateral chromatic shift; and the
 * median fitted width as its PSF sigma, with the bead's own size (a uniform sphere of radius r projects to a
 * variance r²/5 per axis) and the pixel width (1/12 px², point-sampled fit of pixel-integrated light) removed in
 * quadrature. A channel with fewer than `minBeads` usable bead images keeps the common transform and says so.
 * Translation only: a chromatic magnification difference is below a pixel across a field for common objectives.
 *
 * @param common - common AFM px → fluorescence px transform
 * @param beads - beads in the AFM field (AFM px, diameter nm)
 * @param channels - raw frames with their predicted PSF sigma
 * @param options - see {@link EstimateChannelRegistrationOptions}
 * @returns per channel: offset, transform, PSF sigma, bead count; bead fits; fall-back warnings
 * @see docs/references.md §4 (PSF width), §9 (multicolour beads as channel fiducials)
 */
export function estimateChannelRegistration(
  common: Affine,
  beads: readonly RegistrationBead[],
  channels: readonly RegistrationChannel[],
  options: EstimateChannelRegistrationOptions,
): EstimateChannelRegistrationResult {
  const { flPixelNm, minBeads = 3, minPeakSnr = 10, maxShiftPx = 3 } = options;
  if (!(flPixelNm > 0)) throw new RangeError(`flPixelNm must be > 0, got ${flPixelNm}`);
  const [a, b, c, d, e, f] = common;
  const mapped = beads.map((bead) => ({ x: a * bead.afmPx.x + b * bead.afmPx.y + c, y: d * bead.afmPx.x + e * bead.afmPx.y + f }));
  const out: Record<string, ChannelRegistration> = {};
  const fitsByMarker: Record<string, (BeadSpotFit | null)[]> = {};
  const warnings: string[] = [];
  for (const ch of channels) {
    const fits = fitBeadSpots(ch.raster, mapped, { sigmaPx: ch.sigmaPx, maxShiftPx });
    fitsByMarker[ch.marker] = fits;
    const used = fits
      .map((fit, i) => ({ fit, i }))
      .filter((u): u is { fit: BeadSpotFit; i: number } => u.fit !== null && u.fit.peakSnr >= minPeakSnr);
    let offsets = used.map(({ fit, i }) => ({ x: fit.x - mapped[i].x, y: fit.y - mapped[i].y, i }));
    if (offsets.length > 0) {
      const mx = median(offsets.map((o) => o.x));
      const my = median(offsets.map((o) => o.y));
      offsets = offsets.filter((o) => Math.hypot(o.x - mx, o.y - my) <= 1);
    }
    if (offsets.length < minBeads) {
      out[ch.marker] = { offsetFlPx: { x: 0, y: 0 }, flFromAfm: common, psfSigmaPx: null, nbBeads: offsets.length, source: 'common', offsetScatterNm: null };
      warnings.push(
        `Channel ${ch.marker}: ${offsets.length} bead${offsets.length === 1 ? '' : 's'} seen (at least ${minBeads} needed), so it uses the common transform ` +
          'without a chromatic correction and the PSF width from the optics; image more multicolour beads in the field to correct it.',
      );
      continue;
    }
    const ox = offsets.reduce((s, o) => s + o.x, 0) / offsets.length;
    const oy = offsets.reduce((s, o) => s + o.y, 0) / offsets.length;
    const scatter = Math.sqrt(offsets.reduce((s, o) => s + (o.x - ox) ** 2 + (o.y - oy) ** 2, 0) / offsets.length) * flPixelNm;
    const sigmas = offsets.map(({ i }) => {
      const fit = used.find((u) => u.i === i)!.fit;
      const beadRadiusPx = beads[i].diameterNm / 2 / flPixelNm;
      return Math.sqrt(Math.max(0, fit.sigmaPx ** 2 - (beadRadiusPx * beadRadiusPx) / 5 - 1 / 12));
    });
    out[ch.marker] = {
      offsetFlPx: { x: ox, y: oy },
      flFromAfm: [a, b, c + ox, d, e, f + oy],
      psfSigmaPx: plausibleSigma(median(sigmas), ch.sigmaPx),
      nbBeads: offsets.length,
      source: 'beads',
      offsetScatterNm: offsets.length >= 2 ? scatter : null,
    };
  }
  return { channels: out, fitsByMarker, warnings };
}

/**
 * A measured width far from the optics' prediction means the beads are not what was assumed (other size, not
 * uniformly dyed, saturated): then the prediction stays (null).
 */
function plausibleSigma(measured: number, predicted: number): number | null {
  return measured >= 0.6 * predicted && measured <= 1.6 * predicted ? measured : null;
}

