import { pgTable, pgEnum, uuid, text, timestamp, integer, real, doublePrecision, date, primaryKey, index, unique } from 'drizzle-orm/pg-core';
import { users } from './users';

export const memberRoleEnum = pgEnum('member_role', ['biologist', 'analyst', 'collaborator']);
export const controlKindEnum = pgEnum('control_kind', ['none', 'isotype', 'secondary_only', 'buffer_only']);

export const studies = pgTable('studies', {
  id: uuid().primaryKey().defaultRandom(),
  name: text().notNull(),
  description: text().notNull().default(''),
  createdBy: uuid().references(() => users.id, { onDelete: 'set null' }),
  createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  /*
   * The camera noise model of the study's fluorescence frames (raw counts): a pixel holding N photons reads
   * offset + gain·N ± read noise. Set by an analyst from the camera's data sheet or a photon-transfer
   * measurement; all three null = not set (linking then estimates what the frames allow).
   */
  // double precision: values typed by a person come back as typed (a 4-byte real turns 1.8 into 1.7999999523)
  cameraOffsetCounts: doublePrecision(),
  cameraGainCountsPerPhoton: doublePrecision(),
  cameraReadNoiseCounts: doublePrecision(),
});

export const studyMembers = pgTable(
  'study_members',
  {
    studyId: uuid().notNull().references(() => studies.id, { onDelete: 'cascade' }),
    userId: uuid().notNull().references(() => users.id, { onDelete: 'cascade' }),
    role: memberRoleEnum().notNull(),
    addedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.studyId, t.userId] }), index().on(t.userId)],
);

/** A de-identified sample. `code` must never be a person's name; the UI warns on name- or date-like codes. */
export const samples = pgTable(
  'samples',
  {
    id: uuid().primaryKey().defaultRandom(),
    studyId: uuid().notNull().references(() => studies.id, { onDelete: 'cascade' }),
    code: text().notNull(),
    groupLabel: text().notNull().default(''),
    source: text().notNull().default(''),
    isolationMethod: text().notNull().default(''),
    collectionDate: date(),
    dilution: text().notNull().default(''),
    substrate: text().notNull().default(''),
    notes: text().notNull().default(''),
    controlKind: controlKindEnum().notNull().default('none'),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [unique().on(t.studyId, t.code), index().on(t.studyId)],
);

/** The study's marker panel: one row per fluorescence channel. */
export const markerChannels = pgTable(
  'marker_channels',
  {
    id: uuid().primaryKey().defaultRandom(),
    studyId: uuid().notNull().references(() => studies.id, { onDelete: 'cascade' }),
    channelIndex: integer().notNull(),
    marker: text().notNull(),
    antibodyClone: text().notNull().default(''),
    fluorophore: text().notNull().default(''),
    excitationNm: real(),
    emissionNm: real(),
    /**
     * k: the calibrated z a vesicle's amplitude must exceed to be called positive (with controls, also above their 0.99
     * quantile). Default 2.58 (one-sided p < 0.005), the analysis core's DEFAULT_Z_CRITICAL; panels made earlier keep 3.
     */
    positivityK: real().notNull().default(2.58),
    /** A threshold set by hand (joint amplitude, counts); when set it replaces the derived one. */
    manualThresholdCounts: real(),
  },
  (t) => [unique().on(t.studyId, t.channelIndex), unique().on(t.studyId, t.marker), index().on(t.studyId)],
);
