import type { FiducialPair } from '../geometry/types';
import type { Affine, Point, Raster } from '../types';
import type { CameraModel } from './renderCorrelativeChannel';

/** One marker channel of a correlative scene. */
export interface CorrelativeMarkerSpec {
  readonly marker: string;
  /** Emission wavelength (nm). */
  readonly emissionNm: number;
  /** Probability that a labelled (not unlabelled) vesicle carries this marker. */
  readonly positiveFraction: number;
}

/** Options of {@link makeCorrelativeScene}. Lengths in nm unless named Px; photons are detected photons. */
export interface MakeCorrelativeSceneOptions {
  /** Seed of the PRNG. @default 1 */
  seed?: number;
  /** 'sparse': vesicles apart; 'crowded': more vesicles, half of them in close pairs (closer than the PSF FWHM). @default 'sparse' */
  layout?: 'sparse' | 'crowded';
  /** AFM raster side (px). @default 512 */
  afmSizePx?: number;
  /** AFM pixel size (nm/px). @default 10 */
  afmPixelNm?: number;
  /** Fluorescence frame side (px). @default 160 */
  flSizePx?: number;
  /** Fluorescence pixel size in the sample plane (nm/px). @default 65 */
  flPixelNm?: number;
  /** @default 1.4 */
  numericalAperture?: number;
  /** Markers in channel order. @default CD9 520 nm 0.6, CD63 590 nm 0.45, CD81 670 nm 0.5 */
  markers?: readonly CorrelativeMarkerSpec[];
  /** Vesicles inside the AFM field. @default 60 sparse, 130 crowded */
  nbVesicles?: number;
  /** Vesicles outside the AFM field but inside the fluorescence frame. @default 40 */
  nbVesiclesOutsideAfm?: number;
  /** Fraction of vesicles that carry no label at all. @default 0.3 */
  unlabelledFraction?: number;
  /** Photons of one labelled marker on one vesicle, drawn log-uniformly. @default [300, 2000] */
  labelPhotonsRange?: readonly [number, number];
  /** Vesicle base radius (nm) and contact angle (degrees) ranges; height h = a·tan(θ/2). @default [25, 70], [20, 70] */
  baseRadiusRangeNm?: readonly [number, number];
  contactAngleRangeDeg?: readonly [number, number];
  /** Multicolour beads inside the AFM field, and in the frame outside it. @default 6, 3 */
  nbBeads?: number;
  nbBeadsOutsideAfm?: number;
  /** Bead diameter range (nm). @default [100, 200] */
  beadDiameterRangeNm?: readonly [number, number];
  /** Bead photons per channel. @default [6000, 20000] */
  beadPhotonsRange?: readonly [number, number];
  /** Dim emitters (single antibodies on the substrate) per channel and their photons. @default 25, [60, 250] */
  nbDimEmittersPerChannel?: number;
  dimPhotonsRange?: readonly [number, number];
  /** Free dye spots (aggregates not on vesicles) per channel and their photons. @default 8, [300, 1500] */
  nbFreeDyePerChannel?: number;
  freeDyePhotonsRange?: readonly [number, number];
  /** Dim emitters and free dye keep at least this far from every vesicle and bead centre (nm). @default 250 */
  minEmitterDistanceNm?: number;
  /** Fraction of dim emitters and free dye placed near a vesicle (within minEmitterDistanceNm + 200 nm). @default 0.4 */
  nearVesicleFraction?: number;
  /** AFM tip ball radius (nm) and cone half-angle (degrees). @default 8, 20 */
  tipRadiusNm?: number;
  tipHalfAngleDeg?: number;
  /** AFM substrate tilt (nm/px), scan-line offset SD (nm) and white noise SD (nm). @default 0.03, -0.02, 0.6, 0.3 */
  tiltXNmPerPx?: number;
  tiltYNmPerPx?: number;
  lineOffsetSigmaNm?: number;
  afmNoiseSigmaNm?: number;
  /** Rendered PSF and its stretch over the ideal one (the analysis fits a Gaussian of 0.21λ/NA). @default 'airy', 1.15 */
  psf?: 'airy' | 'gaussian';
  psfWidthFactor?: number;
  /** Background at the frame centre (photons/px) and slope (photons/px per px). @default 100, { x: 0.12, y: -0.08 } */
  backgroundPhotonsPerPx?: number;
  backgroundSlopePerPx?: { readonly x: number; readonly y: number };
  /** Camera model. @default offset 100 counts, gain 1.8 counts/photon, read noise 2 counts */
  camera?: CameraModel;
  /** Lateral chromatic shift of channel c from channel 0: c × this (nm), along chromaticShiftAngleDeg. @default 0, 30 */
  chromaticShiftNmPerChannel?: number;
  chromaticShiftAngleDeg?: number;
  /** Rotation (deg) and mirror of the AFM → fluorescence map. @default 4, true */
  rotationDeg?: number;
  mirrored?: boolean;
  /** Where the AFM field's centre falls in the frame, as fractions of the frame side. @default { x: 0.8, y: 0.5 } */
  afmCentreInFrame?: { readonly x: number; readonly y: number };
  /** SD of the fiducial picking error per axis (nm), in each image. @default 30 */
  pickJitterNm?: number;
}

/** Truth of one object (vesicle or bead) of a correlative scene. */
export interface CorrelativeObjectTruth {
  /** 0-based index within its list. */
  readonly index: number;
  /** Position in AFM px (may lie outside the AFM raster). */
  readonly afmPx: Point;
  /** True position in each channel (fluorescence px of that channel, chromatic shift included). */
  readonly flPxByMarker: Readonly<Record<string, Point>>;
  /** Apex height (nm); for a bead its diameter. */
  readonly heightNm: number;
  /** Base radius a (nm); for a bead its radius. */
  readonly baseRadiusNm: number;
  /** 2·atan(h/a) for caps (degrees); 180 for beads. */
  readonly contactAngleDeg: number;
  /** Tip-broadened base half-width as imaged (nm), where the numeric tip image meets the substrate. */
  readonly imagedHalfWidthNm: number;
  /** Whether the object lies inside the AFM raster (its centre and footprint). */
  readonly inAfmField: boolean;
  /** Whether its centre lies inside each channel's frame. */
  readonly inFrameByMarker: Readonly<Record<string, boolean>>;
  /** Marker labels (beads: true in every channel). */
  readonly labels: Readonly<Record<string, boolean>>;
  /** Photons emitted into each channel (0 when unlabelled for it). */
  readonly photonsByMarker: Readonly<Record<string, number>>;
  /** Index of a crowded-layout partner placed closer than the PSF FWHM, else null. */
  readonly closePartner: number | null;
}

/** A light source that is neither vesicle nor bead. */
export interface CorrelativeEmitterTruth {
  readonly marker: string;
  readonly kind: 'dim' | 'free_dye';
  /** Fluorescence px of its channel. */
  readonly flPx: Point;
  readonly photons: number;
  /** Whether it was placed near a vesicle on purpose. */
  readonly nearVesicle: boolean;
}

/** One rendered channel. */
export interface CorrelativeChannel {
  readonly marker: string;
  readonly emissionNm: number;
  /** Camera frame (counts). */
  readonly raster: Raster;
  /** Noise-free expected photons per pixel. */
  readonly expectedPhotons: Raster;
  /** True AFM px → this channel's fluorescence px. */
  readonly flFromAfm: Affine;
  /** This channel's chromatic shift from channel 0 (fluorescence px). */
  readonly chromaticShiftPx: Point;
  /** σ (px) of the Gaussian the analysis assumes, 0.21λ/NA, and of the rendered PSF's Gaussian equivalent. */
  readonly modelPsfSigmaPx: number;
  readonly renderedPsfSigmaPx: number;
  /** Fraction of each emitter's photons the rendering kept (Airy rings beyond the rendered disc are dropped). */
  readonly enclosedFraction: number;
}

/** Output of {@link makeCorrelativeScene}; `heightNm`, `afmPixelNm`, `channels`, `flPixelNm`, `numericalAperture` fit AnalyzeFieldInput. */
export interface CorrelativeScene {
  /** Raw AFM height map (nm): tilt, line offsets, noise. */
  readonly heightNm: Raster;
  /** Noise-free, level, tip-imaged topography (nm). */
  readonly topographyNm: Raster;
  readonly afmPixelNm: number;
  readonly channels: readonly CorrelativeChannel[];
  readonly flPixelNm: number;
  readonly numericalAperture: number;
  /** AFM px → fluorescence px of channel 0 (no chromatic shift). */
  readonly flFromAfm: Affine;
  /** Picks a person would place on the beads in the AFM field and frame (AFM px, channel-0 px), with jitter. */
  readonly fiducialPicks: readonly FiducialPair[];
  /** Which bead each pick is on. */
  readonly pickBeadIndices: readonly number[];
  readonly vesicles: readonly CorrelativeObjectTruth[];
  readonly beads: readonly CorrelativeObjectTruth[];
  readonly emitters: readonly CorrelativeEmitterTruth[];
  readonly camera: CameraModel;
  readonly backgroundPhotonsPerPx: number;
  readonly tip: { readonly radiusNm: number; readonly halfAngleDeg: number };
  readonly seed: number;
}
