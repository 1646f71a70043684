import './zodConfig';
import { z } from 'zod';

const Pt = z.object({ x: z.number().finite().min(-1e6).max(1e6), y: z.number().finite().min(-1e6).max(1e6) });

export const RegistrationSaveRequest = z.object({
  /** The version the analyst started from (0 when there was none): a stale base gets 409. */
  basedOnVersion: z.number().int().min(0),
  model: z.enum(['affine', 'similarity']).default('affine'),
  pairs: z.array(z.object({ afm: Pt, fl: Pt })).min(3, 'Place at least 3 fiducial pairs').max(500),
});
export type RegistrationSaveRequest = z.infer<typeof RegistrationSaveRequest>;

export const AutoPairRequest = z.object({
  model: z.enum(['affine', 'similarity']).default('affine'),
  inlierTolerancePx: z.number().positive().max(20).default(2),
});

export const SavedRegistration = z.object({
  id: z.string(),
  version: z.number(),
  model: z.enum(['affine', 'similarity']),
  pairs: z.array(z.object({ afm: Pt, fl: Pt })),
  flFromAfm: z.array(z.number()).length(6),
  freNm: z.number().nullable(),
  treNm: z.number().nullable(),
  createdAt: z.string(),
  createdByName: z.string().nullable(),
});
export type SavedRegistration = z.infer<typeof SavedRegistration>;
