import './zodConfig';
import { z } from 'zod';

const num = z.coerce.number().finite().optional();

export const VesicleQuery = z
  .object({
    fieldId: z.uuid().optional(),
    sampleId: z.uuid().optional(),
    page: z.coerce.number().int().min(0).max(1_000_000).default(0),
    pageSize: z.coerce.number().int().min(1).max(500).default(50),
    sort: z.enum(['index', 'heightNm', 'diameterNm', 'volumeNm3', 'phenotype']).default('index'),
    dir: z.enum(['asc', 'desc']).default('asc'),
    minHeightNm: num,
    maxHeightNm: num,
    minDiameterNm: num,
    maxDiameterNm: num,
    phenotype: z.string().max(200).optional(),
  })
  .refine((q) => !!q.fieldId !== !!q.sampleId, 'Give either fieldId or sampleId');
export type VesicleQuery = z.infer<typeof VesicleQuery>;

export const VesicleRow = z.object({
  id: z.number(),
  fieldId: z.string(),
  index: z.number(),
  xAfmPx: z.number(),
  yAfmPx: z.number(),
  xFlPx: z.number().nullable(),
  yFlPx: z.number().nullable(),
  heightNm: z.number(),
  diameterNm: z.number(),
  volumeNm3: z.number(),
  sphereDiameterNm: z.number().nullable(),
  contactAngleDeg: z.number().nullable(),
  /** Spherical cap after tip correction (null where capFlag says it was not possible; absent in older servers). */
  capBaseDiameterNm: z.number().nullable().optional(),
  capVolumeNm3: z.number().nullable().optional(),
  capFlag: z.string().nullable().optional(),
  split: z.boolean().optional(),
  outOfFrame: z.boolean(),
  phenotype: z.string(),
  /** Per channel: the call and its error model (runs linked before calls had one lack se, z, p, q and call). */
  markers: z.array(z.object({
    intensity: z.number().nullable(), snr: z.number().nullable(), amplitude: z.number().nullable(), spotDistancePx: z.number().nullable(),
    se: z.number().nullable().optional(), z: z.number().nullable().optional(), p: z.number().nullable().optional(), q: z.number().nullable().optional(),
    call: z.enum(['positive', 'negative', 'not_measured']).optional(),
  })),
});
export const VesiclePage = z.object({ rows: z.array(VesicleRow), total: z.number(), markers: z.array(z.string()), phenotypes: z.array(z.object({ phenotype: z.string(), n: z.number() })) });
export type VesiclePage = z.infer<typeof VesiclePage>;

export const ReviewRequest = z.object({
  decision: z.enum(['approved', 'sent_back']),
  comment: z.string().trim().max(2000).default(''),
  /** The field version the reviewer saw (optimistic concurrency). */
  expectedVersion: z.number().int().min(1),
});
