import { median } from 'simple-statistics';
import { applyAffine } from '../geometry/applyAffine';
import { estimateChannelRegistration, type ChannelRegistration, type EstimateChannelRegistrationResult } from '../geometry/estimateChannelRegistration';
import { fitBeadSpots } from '../geometry/fitBeadSpots';
import type { MeasureVesicleResult } from '../heightmap/types';
import type { Affine, Point, Raster } from '../types';
import { classifyBeads, type ClassifiedBead } from './classifyBeads';
import { subtractBeadImages } from './subtractBeadImages';
import type { BeadReason, BeadRecord, FieldRegistrationNote } from './types';

/** Inputs of {@link separateBeads}. */
export interface SeparateBeadsInput {
  /** Measured objects below the detection's fixed bead cut-off, and the tall ones above it. */
  readonly objects: readonly MeasureVesicleResult[];
  readonly tallObjects: readonly MeasureVesicleResult[];
  readonly labels: Int32Array;
  readonly width: number;
  /** AFM positions of the fiducial picks or saved pairs (AFM px). */
  readonly picksAfmPx: readonly Point[];
  /** The common AFM px → fluorescence px transform. */
  readonly flFromAfm: Affine;
  /** Raw frames and the PSF sigma the optics predict (px), in channel order. */
  readonly channels: readonly { readonly marker: string; readonly raster: Raster; readonly sigmaPx: number }[];
  readonly afmPixelNm: number;
  readonly flPixelNm: number;
}

/** Options of {@link separateBeads}. */
export interface SeparateBeadsOptions {
  /** A pick on background takes the nearest object within this distance (nm). @default 300 */
  pickRadiusNm?: number;
  /**
   * Bright in every channel: at least this fraction of the known beads' median integrated counts in each; without
   * known beads, above Q3 + 3·IQR and 2.5× the 90th percentile of the vesicles' own integrated counts in each.
   * @default 0.25
   */
  multicolourFraction?: number;
  /** Multicolour candidates must be at least this round (4πA/P²). @default 0.7 */
  minCircularity?: number;
  /** Fewer beads in a channel: it keeps the common transform. @default 3 */
  minBeadsPerChannel?: number;
}

/** Result of {@link separateBeads}. */
export interface SeparateBeadsResult {
  readonly vesicles: readonly MeasureVesicleResult[];
  readonly beads: readonly BeadRecord[];
  /** The bead objects, in the order of `beads`. */
  readonly beadObjects: readonly MeasureVesicleResult[];
  readonly channels: Readonly<Record<string, ChannelRegistration>>;
  /** Height fence used (nm), or null with too few objects. */
  readonly heightFenceNm: number | null;
  readonly notes: readonly FieldRegistrationNote[];
  /** Each frame with the beads' light taken out ({@link subtractBeadImages}), for measuring vesicles. */
  readonly rastersWithoutBeads: Readonly<Record<string, Raster>>;
}

/**
 * Beads are never vesicles. After the common registration: classify beads by height and fiducial picks
 * ({@link classifyBeads}); refine the transform per channel and measure each channel's PSF on them
 * ({@link estimateChannelRegistration}); then test the remaining round objects taller than the upper quartile, and
 * every picked object, for light in every channel: an object as bright as the known beads in every channel (or,
 * with no known bead, brighter than the vesicles' far-out fence Q3 + 3·IQR in every channel) is a multicolour bead. A pick on
 * an object that is neither taller than the vesicles nor bright in every channel is still taken out of the vesicles,
 * with a note that it looks like a vesicle.
 *
 * @param input - see {@link SeparateBeadsInput}
 * @param options - see {@link SeparateBeadsOptions}
 * @returns vesicles, bead records with their reasons, per-channel registration and notes
 */
export function separateBeads(input: SeparateBeadsInput, options: SeparateBeadsOptions = {}): SeparateBeadsResult {
  const { pickRadiusNm = 300, multicolourFraction = 0.25, minCircularity = 0.7, minBeadsPerChannel = 3 } = options;
  const { objects, tallObjects, labels, width, picksAfmPx, flFromAfm, channels, afmPixelNm, flPixelNm } = input;
  const split = classifyBeads(objects, tallObjects, { labels, width, afmPixelNm, picksAfmPx, pickRadiusNm });
  const register = (beads: readonly ClassifiedBead[]): EstimateChannelRegistrationResult =>
    estimateChannelRegistration(flFromAfm, beads.map((b) => ({ afmPx: b.object.centroidPx, diameterNm: b.object.apexHeightNm })), channels, {
      flPixelNm, minBeads: minBeadsPerChannel,
    });
  let beads: ClassifiedBead[] = [...split.beads];
  let reg = register(beads);

  // multicolour: as bright as the known (tall or picked) beads in every channel, measured where each channel's
  // transform puts it; without known beads, above the far-out fence of the vesicles' own brightness in every channel
  const reference: Record<string, number | null> = {};
  for (const c of channels) {
    const counts = reg.fitsByMarker[c.marker]
      .map((f, i) => (f && (beads[i].reasons.includes('height') || beads[i].reasons.includes('fiducial_pick')) && f.peakSnr >= MIN_SUBTRACT_SNR ? f.integratedCounts : null))
      .filter((v): v is number => v !== null);
    reference[c.marker] = counts.length >= 2 ? multicolourFraction * median(counts) : null;
  }
  const brightness = (objects: readonly MeasureVesicleResult[], c: (typeof channels)[number]): number[] =>
    fitBeadSpots(c.raster, objects.map((o) => applyAffine(reg.channels[c.marker].flFromAfm, o.centroidPx)), { sigmaPx: c.sigmaPx, maxShiftPx: 1.5 })
      .map((f) => Math.max(0, f?.integratedCounts ?? 0));
  for (const c of channels) {
    // the brightness of vesicles no taller than the upper quartile: tall candidates (beads among them) stay out of it
    const shorter = split.upperQuartileNm === null ? [] : split.vesicles.filter((o) => o.apexHeightNm <= split.upperQuartileNm!);
    if (reference[c.marker] !== null || shorter.length < 8) continue;
    const counts = brightness(shorter, c).sort((p, q) => p - q);
    const q1 = counts[Math.floor(0.25 * (counts.length - 1))];
    const q3 = counts[Math.ceil(0.75 * (counts.length - 1))];
    const p90 = counts[Math.ceil(0.9 * (counts.length - 1))];
    // when most vesicles are dark the fence sits near noise: a bead must also outshine the bright vesicles 2.5-fold
    reference[c.marker] = Math.max(q3 + 3 * (q3 - q1), UNKNOWN_BEAD_BRIGHTNESS_RATIO * p90);
  }
  const tallEnough = split.upperQuartileNm;
  const candidates = [
    ...split.vesicles.filter((o) => tallEnough !== null && o.apexHeightNm > tallEnough && o.circularity >= minCircularity),
    ...beads.filter((b) => b.pickIndex !== null && !b.reasons.includes('height')).map((b) => b.object),
  ];
  const countsOf = new Map<MeasureVesicleResult, Record<string, number | null>>();
  if (candidates.length && channels.every((c) => reference[c.marker] !== null)) {
    for (const c of channels) {
      const counts = brightness(candidates, c);
      candidates.forEach((o, i) => {
        const rec = countsOf.get(o) ?? {};
        rec[c.marker] = counts[i];
        countsOf.set(o, rec);
      });
    }
  }
  const isMulticolour = (o: MeasureVesicleResult): boolean => {
    const rec = countsOf.get(o);
    return !!rec && channels.every((c) => (rec[c.marker] ?? 0) >= (reference[c.marker] ?? Infinity));
  };
  const newBeads = candidates.filter((o) => !beads.some((b) => b.object === o) && isMulticolour(o));
  beads = beads.map((b) => (isMulticolour(b.object) && !b.reasons.includes('multicolour') ? { ...b, reasons: [...b.reasons, 'multicolour' as BeadReason] } : b));
  beads.push(...newBeads.map((o) => ({ object: o, reasons: ['multicolour' as BeadReason], pickIndex: null })));
  if (newBeads.length) reg = register(beads);

  const notes: FieldRegistrationNote[] = [];
  for (const b of beads) {
    if (b.pickIndex === null || b.reasons.includes('height') || b.reasons.includes('multicolour')) continue;
    notes.push({
      code: 'fiducial_on_vesicle',
      message: `Fiducial pair ${b.pickIndex + 1} sits on an object ${b.object.apexHeightNm.toFixed(0)} nm high that is not taller than the ` +
        `vesicles${split.heightFenceNm === null ? '' : ` (bead height from ${split.heightFenceNm.toFixed(0)} nm)`} nor bright in every channel: ` +
        'a vesicle rather than a bead. It was left out of the vesicles; move the pick onto a bead.',
    });
  }
  for (const w of reg.warnings) notes.push({ code: 'channel_common_transform', message: w });
  for (const k of split.unmatchedPicks) {
    notes.push({ code: 'fiducial_on_background', message: `Fiducial pair ${k + 1} has no object under it in the AFM image within ${pickRadiusNm} nm; check the pick.` });
  }

  const rastersWithoutBeads: Record<string, Raster> = {};
  for (const c of channels) {
    const images = reg.fitsByMarker[c.marker].filter((f): f is NonNullable<typeof f> => f !== null && f.peakSnr >= MIN_SUBTRACT_SNR);
    rastersWithoutBeads[c.marker] = images.length ? subtractBeadImages(c.raster, images).raster : c.raster;
  }
  const beadSet = new Set(beads.map((b) => b.object));
  const records: BeadRecord[] = beads.map((b, index) => {
    const flPxByMarker: Record<string, Point> = {};
    const integratedCountsByMarker: Record<string, number | null> = {};
    const i = reg.fitsByMarker[channels[0]?.marker]?.length ? beads.indexOf(b) : -1;
    for (const c of channels) {
      flPxByMarker[c.marker] = applyAffine(reg.channels[c.marker].flFromAfm, b.object.centroidPx);
      integratedCountsByMarker[c.marker] = i >= 0 ? reg.fitsByMarker[c.marker][i]?.integratedCounts ?? null : null;
    }
    const order: BeadReason[] = ['height', 'multicolour', 'fiducial_pick'];
    const reasons = order.filter((r) => b.reasons.includes(r));
    return {
      index,
      xAfmPx: b.object.centroidPx.x,
      yAfmPx: b.object.centroidPx.y,
      heightNm: b.object.apexHeightNm,
      footprintDiameterNm: b.object.footprintDiameterNm,
      circularity: b.object.circularity,
      reason: reasons[0],
      reasons,
      pickIndex: b.pickIndex,
      flPxByMarker,
      integratedCountsByMarker,
    };
  });
  return {
    vesicles: objects.filter((o) => !beadSet.has(o)),
    beads: records,
    beadObjects: beads.map((b) => b.object),
    channels: reg.channels,
    heightFenceNm: split.heightFenceNm,
    notes,
    rastersWithoutBeads,
  };
}

/**
 * Without known beads, a multicolour bead outshines the 90th percentile of the vesicles by this factor in every
 * channel: multicolour beads carry several times the dye of a labelled EV (common practice; 6000–20 000 against
 * 300–2000 photons in the test fields).
 */
const UNKNOWN_BEAD_BRIGHTNESS_RATIO = 2.5;

/** Bead images fainter than this (peak over background SD) stay in the frame: too faint to measure or to matter. */
const MIN_SUBTRACT_SNR = 10;

