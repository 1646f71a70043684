/**
 * Replies of the API routes the islands call, as the islands read them: src/lib/api-client parses every reply with
 * one of these, so a route that changes its reply fails loudly in the island instead of rendering undefined.
 * Objects strip keys they do not name; the routes may send more.
 */
import { z } from 'zod';
import { CameraModelSetting } from './cameraModel';

/** Error bodies of every route: `{ error, message }` (src/lib/http). */
export const ErrorReply = z.object({ error: z.string().optional(), message: z.string().optional() });

/** Replies whose content the island does not read; only their status matters. */
export const AnyReply = z.unknown();

const Point = z.object({ x: z.number(), y: z.number() });
const Blob = Point.extend({ heightNm: z.number(), diameterNm: z.number() });

export const FieldDetectionReply = z.looseObject({
  afmPixelNm: z.number(),
  flPixelNm: z.number(),
  thresholdNm: z.number(),
  backgroundSigmaNm: z.number(),
  vesicles: z.array(Blob),
  fiducialCandidates: z.array(Blob),
  spots: z.array(z.object({
    channelIndex: z.number(),
    marker: z.string(),
    sigmaPx: z.number(),
    spots: z.array(Point.extend({ integratedCounts: z.number(), snr: z.number() })),
  })),
});

export const FieldStatusReply = z.object({
  field: z.object({
    status: z.string(),
    failureReason: z.string().nullable(),
    progress: z.object({ stage: z.string(), fraction: z.number() }).nullable(),
  }),
});

export const AutoPairReply = z.object({
  model: z.enum(['affine', 'similarity']),
  rmsResidualPx: z.number(),
  pairs: z.array(z.object({ afm: Point, fl: Point, residualPx: z.number() })),
});

export const RegistrationSavedReply = z.object({ version: z.number(), freNm: z.number().nullable() });

export const StudyCreatedReply = z.object({ id: z.string() });

export const ReleaseReply = z.object({ version: z.number() });

const MarkerUsed = z.object({
  rule: z.enum(['manual', 'camera_noise', 'control', 'control_mean_k_sd', 'background_mean_k_sd']),
  k: z.number().nullable(),
  thresholdCounts: z.number().nullable(),
  sentence: z.string().nullable().optional(),
});
export const PositivitySavedReply = z.object({
  fieldsLinkedWithOtherSettings: z.array(z.object({
    id: z.string(),
    name: z.string(),
    sampleCode: z.string(),
    status: z.enum(['linked', 'approved']),
    markers: z.array(z.object({ marker: z.string(), used: MarkerUsed.nullable() })),
  })),
});

export const RelinkReply = z.object({ queued: z.array(z.string()) });

// the request schema is strict; a reply may carry more keys
export const CameraSavedReply = z.object({ camera: z.object(CameraModelSetting.shape).nullable() });

export const UsersReply = z.object({
  users: z.array(z.object({
    id: z.string(),
    email: z.string(),
    name: z.string(),
    role: z.string(),
    active: z.boolean(),
    pendingInvitation: z.boolean(),
  })),
});

export const EmailReply = z.object({ email: z.string() });

/** Auth.js: the CSRF token, and the redirect its credentials callback answers with (`X-Auth-Return-Redirect`). */
export const CsrfReply = z.object({ csrfToken: z.string() });
export const RedirectReply = z.object({ url: z.string() });

// The results replies are large (src/lib/reporting/types.ts): these check their frame (the arrays and objects the
// dashboard iterates) and let the leaves through, so a changed route fails here and not as a blank chart.
const ResultSourceReply = z.enum(['released', 'current']);
const PanelReply = z.array(z.object({ channelIndex: z.number(), marker: z.string() }));
const HistogramReply = z.looseObject({ lowNm: z.number(), binWidthNm: z.number(), counts: z.array(z.number()) });
const SizeReply = z.looseObject({ medianNm: z.number().nullable(), histogram: HistogramReply, byPhenotype: z.record(z.string(), HistogramReply) });

export const SampleResultsReply = z.looseObject({
  sample: z.object({ id: z.string(), code: z.string(), groupLabel: z.string(), studyId: z.string(), studyName: z.string(), controlKind: z.string() }),
  source: ResultSourceReply,
  release: z.looseObject({ version: z.number() }).nullable(),
  panel: PanelReply,
  fieldsAnalysed: z.number(),
  vesicles: z.number(),
  phenotyped: z.number(),
  markers: z.array(z.looseObject({ marker: z.string(), count: z.number(), total: z.number() })),
  phenotypes: z.array(z.looseObject({ label: z.string(), count: z.number(), total: z.number() })),
  diameter: SizeReply,
  height: SizeReply,
  fields: z.array(z.looseObject({ fieldId: z.string(), name: z.string() })),
});

export const StudyComparisonReply = z.looseObject({
  study: z.object({ id: z.string(), name: z.string() }),
  source: ResultSourceReply,
  panel: PanelReply,
  groups: z.array(z.string()),
  samplesPerGroup: z.record(z.string(), z.number()),
  samples: z.array(z.looseObject({ sampleId: z.string(), code: z.string() })),
  groupA: z.string().nullable(),
  groupB: z.string().nullable(),
  comparisons: z.array(z.looseObject({ kind: z.string() })),
  sizeComparisons: z.array(z.looseObject({})),
  pooled: z.array(z.looseObject({ key: z.string() })),
});
