import { z } from 'zod';
import { canInStudy, type MemberRole, type SessionUser } from '../auth/permissions';
import { HttpError } from '../http/errors';
import type { ResultSource } from './types';

const Group = z.string().trim().min(1, 'name a group').max(200);

/** Query of the comparison routes: both groups or neither, and different. */
export const ComparisonQuery = z
  .object({ groupA: Group.optional(), groupB: Group.optional(), source: z.enum(['released', 'current']).default('released') })
  .refine((q) => (q.groupA === undefined) === (q.groupB === undefined), { message: 'give both groupA and groupB, or neither', path: ['groupB'] })
  .refine((q) => q.groupA === undefined || q.groupA !== q.groupB, { message: 'choose two different groups', path: ['groupB'] });

/**
 * Only lab members may look at unreleased data.
 *
 * @throws HttpError 403 when a collaborator asks for source=current
 */
export function assertSourceAllowed(user: SessionUser, membership: MemberRole | null, source: ResultSource) {
  if (source === 'current' && !canInStudy(user, membership, 'study.read')) {
    throw new HttpError(403, 'forbidden', 'Only released results are shared with collaborators; unreleased analyses stay in the lab.');
  }
}
