import { pgTable, pgEnum, uuid, text, timestamp, integer, real, jsonb, bigint, index, unique } from 'drizzle-orm/pg-core';
import { users } from './users';
import { samples } from './studies';

/** uploading → ingesting → ready → registered → linked → approved; failed (with a reason) from any step. */
export const fieldStatusEnum = pgEnum('field_status', [
  'uploading', 'ingesting', 'ready', 'registered', 'linked', 'approved', 'failed',
]);
export const fileKindEnum = pgEnum('file_kind', ['topography', 'fluorescence']);
export const mediumEnum = pgEnum('imaging_medium', ['air', 'liquid']);

export const fields = pgTable(
  'fields',
  {
    id: uuid().primaryKey().defaultRandom(),
    sampleId: uuid().notNull().references(() => samples.id, { onDelete: 'cascade' }),
    name: text().notNull(),
    status: fieldStatusEnum().notNull().default('uploading'),
    failureReason: text(),
    /** Progress of the running job: stage name and fraction done (0..1). */
    progress: jsonb().$type<{ stage: string; fraction: number } | null>(),
    afmScanSizeNm: real(),
    afmPixelNm: real(),
    tipRadiusNm: real(),
    imagingMedium: mediumEnum().notNull().default('air'),
    scanMode: text().notNull().default(''),
    flPixelNm: real(),
    objectiveNa: real(),
    exposureMs: real(),
    /** Emission wavelength (nm) per fluorescence channel, in panel order. */
    channelEmissionNm: jsonb().$type<number[]>().notNull().default([]),
    /** The analyst's vesicle-detection settings for this field (see src/lib/schemas/detectionSettings.ts); null: automatic defaults. */
    detectionSettings: jsonb().$type<Record<string, unknown>>(),
    afmWidthPx: integer(),
    afmHeightPx: integer(),
    flWidthPx: integer(),
    flHeightPx: integer(),
    /** Bumped on every state change; writers send the version they read (optimistic concurrency). */
    version: integer().notNull().default(1),
    createdBy: uuid().references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.sampleId), index().on(t.createdBy)],
);

/** Objects in S3 belonging to a field. Keys are made by the server, never from file names. */
export const fieldFiles = pgTable(
  'field_files',
  {
    id: uuid().primaryKey().defaultRandom(),
    fieldId: uuid().notNull().references(() => fields.id, { onDelete: 'cascade' }),
    kind: fileKindEnum().notNull(),
    /** For fluorescence: first panel channel this file holds (a stack holds several). */
    channelIndex: integer(),
    objectKey: text().notNull().unique(),
    originalName: text().notNull(),
    sizeBytes: bigint({ mode: 'number' }).notNull(),
    meta: jsonb().$type<Record<string, unknown>>().notNull().default({}),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.fieldId)],
);

/** A rendered Deep Zoom pyramid of one layer of a field (height map or a channel). */
export const tileSets = pgTable(
  'tile_sets',
  {
    id: uuid().primaryKey().defaultRandom(),
    fieldId: uuid().notNull().references(() => fields.id, { onDelete: 'cascade' }),
    layer: text().notNull(),
    prefix: text().notNull(),
    widthPx: integer().notNull(),
    heightPx: integer().notNull(),
    tileSize: integer().notNull(),
    overlap: integer().notNull(),
    format: text().notNull(),
    /** Display range and colour bar (nm for height, counts for channels). */
    display: jsonb().$type<Record<string, unknown>>().notNull().default({}),
  },
  (t) => [unique().on(t.fieldId, t.layer), index().on(t.fieldId)],
);
