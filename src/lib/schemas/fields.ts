import './zodConfig';
/** Request and reply shapes for uploads and fields, shared by the upload island and the routes. */
import { z } from 'zod';

const positive = (what: string) => z.number({ error: `${what} must be a number` }).positive(`${what} must be above zero`).finite();

export const PresignRequest = z.object({
  studyId: z.uuid(),
  fileName: z.string().trim().min(1).max(255),
  sizeBytes: z.number().int().positive('The file is empty'),
});
export const PresignReply = z.object({ uploadId: z.uuid(), url: z.string() });

export const InspectReply = z.object({
  uploadId: z.uuid(),
  sizeBytes: z.number(),
  widthPx: z.number(),
  heightPx: z.number(),
  bitsPerSample: z.number(),
  sampleFormat: z.string(),
  pageCount: z.number(),
  compression: z.string(),
  pixelSizeNm: z.object({ x: z.number(), y: z.number() }).nullable(),
  pixelSizeSource: z.string().nullable(),
  warnings: z.array(z.string()),
});
export type InspectReply = z.infer<typeof InspectReply>;

export const AcquisitionSettings = z.object({
  afmPixelNm: positive('AFM pixel size (nm)').max(1e5).optional(),
  afmScanSizeNm: positive('AFM scan size (nm)').max(1e7).optional(),
  tipRadiusNm: positive('Tip radius (nm)').max(1000).optional(),
  imagingMedium: z.enum(['air', 'liquid']).default('air'),
  scanMode: z.string().trim().max(80).default(''),
  flPixelNm: positive('Fluorescence pixel size (nm)').max(1e5).optional(),
  objectiveNa: positive('Objective NA').max(1.7),
  exposureMs: positive('Exposure (ms)').max(1e6).optional(),
  channelEmissionNm: z.array(positive('Emission wavelength (nm)').min(300).max(1200)).max(16).default([]),
});
export type AcquisitionSettings = z.infer<typeof AcquisitionSettings>;

export const FieldCreateRequest = z.object({
  sampleId: z.uuid(),
  name: z.string().trim().min(1, 'Give the field a name').max(120),
  topographyUploadId: z.uuid(),
  fluorescenceUploadIds: z.array(z.uuid()).min(1, 'Add at least one fluorescence file').max(16),
  settings: AcquisitionSettings,
  /** File names as the user knows them, for display only (object keys never use them). */
  fileNames: z.record(z.string(), z.string().max(255)).default({}),
});
export type FieldCreateRequest = z.infer<typeof FieldCreateRequest>;

export const SampleCreateRequest = z.object({
  code: z.string().trim().min(1, 'Enter the sample code').max(60).regex(/^[A-Za-z0-9._-]+$/, 'Use letters, digits, dot, dash or underscore only'),
  groupLabel: z.string().trim().max(80).default(''),
  source: z.string().trim().max(120).default(''),
  isolationMethod: z.string().trim().max(120).default(''),
  /** Kept to the month (de-identification, common practice): a full date is stored as the 1st of its month. */
  collectionDate: z.union([z.iso.date(), z.string().regex(/^\d{4}-(0[1-9]|1[0-2])$/, 'Give the collection month as YYYY-MM')])
    .optional().transform((v) => (v ? `${v.slice(0, 7)}-01` : undefined)),
  dilution: z.string().trim().max(40).default(''),
  substrate: z.string().trim().max(60).default(''),
  notes: z.string().max(4000).default(''),
  controlKind: z.enum(['none', 'isotype', 'secondary_only', 'buffer_only']).default('none'),
});
