import { pgTable, pgEnum, uuid, text, timestamp, integer, real, jsonb, bigserial, boolean, index, unique, primaryKey } from 'drizzle-orm/pg-core';
import { users } from './users';
import { fields } from './fields';
import { samples } from './studies';

export const transformModelEnum = pgEnum('transform_model', ['affine', 'similarity']);
export const reviewDecisionEnum = pgEnum('review_decision', ['approved', 'sent_back']);
export const sizeMeasureEnum = pgEnum('size_measure', ['diameter_nm', 'height_nm']);

/** One vesicle's values in one channel (vesicles.markers). Older runs lack the fields marked optional. */
export interface VesicleMarkerJson {
  intensity: number | null;
  snr: number | null;
  /** Joint NNLS amplitude (counts). */
  amplitude: number | null;
  amplitudeUnconstrained?: number | null;
  spotDistancePx: number | null;
  /** Standard error of the amplitude (counts). */
  se?: number | null;
  /** amplitude / se (dimensionless). */
  z?: number | null;
  /** z calibrated by the frame's null at empty places; p is its one-sided p-value, q the BH q within the field. */
  zCalibrated?: number | null;
  p?: number | null;
  q?: number | null;
  call?: 'positive' | 'negative' | 'not_measured';
}

/** Every saved registration of a field is kept; the highest version is the accepted one. */
export const registrations = pgTable(
  'registrations',
  {
    id: uuid().primaryKey().defaultRandom(),
    fieldId: uuid().notNull().references(() => fields.id, { onDelete: 'cascade' }),
    version: integer().notNull(),
    model: transformModelEnum().notNull(),
    /** [{ afm: {x,y}, fl: {x,y} }] in pixels of each image. */
    pairs: jsonb().$type<{ afm: { x: number; y: number }; fl: { x: number; y: number } }[]>().notNull(),
    /** flFromAfm as [a, b, c, d, e, f]. */
    flFromAfm: jsonb().$type<number[]>().notNull(),
    freNm: real(),
    treNm: real(),
    createdBy: uuid().references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [unique().on(t.fieldId, t.version), index().on(t.fieldId), index().on(t.createdBy)],
);

/** One linking of a field: the settings and transform that produced its vesicle rows. */
export const linkRuns = pgTable(
  'link_runs',
  {
    id: uuid().primaryKey().defaultRandom(),
    fieldId: uuid().notNull().references(() => fields.id, { onDelete: 'cascade' }),
    registrationId: uuid().references(() => registrations.id, { onDelete: 'set null' }),
    settings: jsonb().$type<Record<string, unknown>>().notNull(),
    summary: jsonb().$type<Record<string, unknown>>().notNull(),
    /** Per channel, as estimated from the field's beads: offset from the shared transform and PSF width; null before this was measured. */
    channelRegistration: jsonb().$type<unknown[]>(),
    current: boolean().notNull().default(true),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.fieldId), index().on(t.registrationId)],
);

/**
 * One row per detected vesicle. `markerBits` holds the positive calls (bit i = panel channel i),
 * so per-sample counts are SQL aggregates; `sampleId` is repeated here for those aggregates.
 * `measuredBits` says where a call was possible at all (bit i = the vesicle lies inside channel i's
 * frame); a vesicle not measured in a channel is neither positive nor negative there and leaves
 * that marker's denominator. The default -1 (every bit set) means "measured in every channel".
 */
export const vesicles = pgTable(
  'vesicles',
  {
    id: bigserial({ mode: 'number' }).primaryKey(),
    linkRunId: uuid().notNull().references(() => linkRuns.id, { onDelete: 'cascade' }),
    fieldId: uuid().notNull().references(() => fields.id, { onDelete: 'cascade' }),
    sampleId: uuid().notNull().references(() => samples.id, { onDelete: 'cascade' }),
    index: integer().notNull(),
    xAfmPx: real().notNull(),
    yAfmPx: real().notNull(),
    xFlPx: real(),
    yFlPx: real(),
    heightNm: real().notNull(),
    meanHeightNm: real().notNull(),
    areaNm2: real().notNull(),
    /**
     * Threshold FOOTPRINT diameter 2·√(A/π) (nm): tip-broadened and threshold-dependent. Kept under this
     * column name because the summary tables and dashboard bins read diameter_nm; the reviewer's sizes are
     * the spherical-cap columns below.
     */
    diameterNm: real().notNull(),
    /** Σ height × pixel area over the footprint (nm³), tip-broadened; the cap volume is capVolumeNm3. */
    volumeNm3: real().notNull(),
    circularity: real().notNull(),
    /** Spherical cap after tip correction: base radius (nm). Null where capFlag says the cap was not possible. */
    capRadiusNm: real(),
    capBaseDiameterNm: real(),
    capHeightNm: real(),
    contactAngleDeg: real(),
    capVolumeNm3: real(),
    /** Diameter of the sphere of the cap's volume (nm). */
    sphereDiameterNm: real(),
    /** Why the cap sizes are missing or not tip-corrected (no_tip_radius, tip_exceeds_image, overhang, cap_fit_failed); null = sound. */
    capFlag: text(),
    /** Cut from a touching pair or cluster: its footprint ends at a saddle, not at the substrate. */
    split: boolean().notNull().default(false),
    outOfFrame: boolean().notNull().default(false),
    markerBits: integer().notNull().default(0),
    measuredBits: integer().notNull().default(-1),
    phenotype: text().notNull().default(''),
    /**
     * Per channel in panel order (see VesicleMarkerJson): aperture intensity and SNR, joint amplitude and its
     * standard error under the camera noise model, z, one-sided p, q (BH within the field) and the call
     * ('positive' | 'negative' | 'not_measured'); null numbers where the vesicle lies outside that frame.
     */
    markers: jsonb().$type<VesicleMarkerJson[]>().notNull(),
  },
  (t) => [
    index().on(t.linkRunId),
    index().on(t.fieldId, t.index),
    index().on(t.sampleId, t.markerBits),
    index().on(t.sampleId, t.heightNm),
    index().on(t.sampleId, t.diameterNm),
    // Released data are selected by link run: this index lets the dashboard aggregates (counts per
    // phenotype, histograms, group samples) run as index-only scans without touching the wide rows.
    index('vesicles_link_run_results_index').on(t.linkRunId, t.markerBits, t.diameterNm, t.heightNm),
  ],
);

/**
 * Beads (fiducial particles) of one link run: never vesicles, so kept out of the vesicles table, its
 * counts and phenotypes. `reason` says why the object is a bead (e.g. taller than any vesicle of the
 * field, bright in every channel, under a fiducial pick); `markers` holds its per-channel amplitudes.
 */
export const beads = pgTable(
  'beads',
  {
    linkRunId: uuid().notNull().references(() => linkRuns.id, { onDelete: 'cascade' }),
    index: integer().notNull(),
    xAfmPx: real().notNull(),
    yAfmPx: real().notNull(),
    xFlPx: real(),
    yFlPx: real(),
    heightNm: real().notNull(),
    footprintDiameterNm: real().notNull(),
    reason: text().notNull(),
    underFiducialPick: boolean().notNull().default(false),
    markers: jsonb().$type<unknown[]>().notNull(),
  },
  (t) => [primaryKey({ columns: [t.linkRunId, t.index] })],
);

/*
 * Summaries of one link run's vesicles, written once in the transaction that writes the vesicles
 * (src/lib/db/queries/linkRunSummaries.ts). Link runs never change after that, so the sums are exact
 * and the study-wide dashboard reads a few rows per run instead of every vesicle. The primary keys
 * start with link_run_id, which also serves as the index on that foreign key.
 */

/**
 * Vesicle count per phenotype bitmask. Only vesicles measured in EVERY channel of the run are counted
 * here (a phenotype needs a call for each marker); per-marker fractions use link_run_marker_counts,
 * whose denominators also include vesicles measured in that channel only.
 */
export const linkRunPhenotypes = pgTable(
  'link_run_phenotypes',
  {
    linkRunId: uuid().notNull().references(() => linkRuns.id, { onDelete: 'cascade' }),
    markerBits: integer().notNull(),
    n: integer().notNull(),
  },
  (t) => [primaryKey({ columns: [t.linkRunId, t.markerBits] })],
);

/**
 * Per channel of a link run: vesicles measured there (inside that channel's frame) and those called
 * positive there. The denominator of a marker's positive fraction is `nMeasured`, never the run's
 * vesicle count.
 */
export const linkRunMarkerCounts = pgTable(
  'link_run_marker_counts',
  {
    linkRunId: uuid().notNull().references(() => linkRuns.id, { onDelete: 'cascade' }),
    channelIndex: integer().notNull(),
    nMeasured: integer().notNull(),
    nPositive: integer().notNull(),
  },
  (t) => [primaryKey({ columns: [t.linkRunId, t.channelIndex] })],
);

/** Dashboard histogram counts per phenotype: `bucket` is PostgreSQL's width_bucket over the dashboard's bin edges. */
export const linkRunHistograms = pgTable(
  'link_run_histograms',
  {
    linkRunId: uuid().notNull().references(() => linkRuns.id, { onDelete: 'cascade' }),
    measure: sizeMeasureEnum().notNull(),
    markerBits: integer().notNull(),
    bucket: integer().notNull(),
    n: integer().notNull(),
  },
  (t) => [primaryKey({ columns: [t.linkRunId, t.measure, t.markerBits, t.bucket] })],
);

/**
 * Fine size bins for the group rank-sum test: `bin` = round(value × bins per nm), so the bin's
 * value is bin / (bins per nm) (see SIZE_BINS_PER_NM in linkRunSummaries.ts).
 */
export const linkRunSizeBins = pgTable(
  'link_run_size_bins',
  {
    linkRunId: uuid().notNull().references(() => linkRuns.id, { onDelete: 'cascade' }),
    measure: sizeMeasureEnum().notNull(),
    bin: integer().notNull(),
    n: integer().notNull(),
  },
  (t) => [primaryKey({ columns: [t.linkRunId, t.measure, t.bin] })],
);

export const fieldReviews = pgTable(
  'field_reviews',
  {
    id: uuid().primaryKey().defaultRandom(),
    fieldId: uuid().notNull().references(() => fields.id, { onDelete: 'cascade' }),
    decision: reviewDecisionEnum().notNull(),
    comment: text().notNull().default(''),
    linkRunId: uuid().references(() => linkRuns.id, { onDelete: 'set null' }),
    reviewedBy: uuid().references(() => users.id, { onDelete: 'set null' }),
    reviewedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.fieldId), index().on(t.linkRunId), index().on(t.reviewedBy)],
);

/** A sample's released results. Each release freezes the link runs it covers. */
export const releases = pgTable(
  'releases',
  {
    id: uuid().primaryKey().defaultRandom(),
    sampleId: uuid().notNull().references(() => samples.id, { onDelete: 'cascade' }),
    version: integer().notNull(),
    linkRunIds: jsonb().$type<string[]>().notNull(),
    releasedBy: uuid().references(() => users.id, { onDelete: 'set null' }),
    releasedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [unique().on(t.sampleId, t.version), index().on(t.sampleId), index().on(t.releasedBy)],
);
