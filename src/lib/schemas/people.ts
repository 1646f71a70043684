import './zodConfig';
import { z } from 'zod';
import { MIN_PASSWORD_LENGTH_CLIENT } from './limits';

export const RoleSchema = z.enum(['admin', 'biologist', 'analyst', 'collaborator']);
export const MemberRoleSchema = z.enum(['biologist', 'analyst', 'collaborator']);

export const InviteRequest = z.object({
  email: z.string().trim().toLowerCase().email('Enter a valid e-mail address').max(254),
  name: z.string().trim().min(1, 'Enter a name').max(120),
  role: RoleSchema,
});

export const PasswordSchema = z
  .string()
  .min(MIN_PASSWORD_LENGTH_CLIENT, `Use at least ${MIN_PASSWORD_LENGTH_CLIENT} characters`)
  .max(256, 'Use at most 256 characters');

export const SetPasswordRequest = z.object({
  token: z.string().min(20).max(200).regex(/^[A-Za-z0-9_-]+$/, 'The link is malformed'),
  password: PasswordSchema,
});

export const ResetRequest = z.object({ email: z.string().trim().toLowerCase().email('Enter a valid e-mail address').max(254) });

export const UpdateUserRequest = z
  .object({ role: RoleSchema.optional(), active: z.boolean().optional() })
  .refine((v) => v.role !== undefined || v.active !== undefined, 'Give a role or an active flag to change');

export const StudyCreateRequest = z.object({
  name: z.string().trim().min(1, 'Enter a study name').max(200),
  description: z.string().max(5000).default(''),
});

export const MembershipRequest = z.object({ userId: z.uuid(), role: MemberRoleSchema.nullable() });

export const PanelChannel = z.object({
  marker: z.string().trim().min(1, 'Name the marker').max(40).regex(/^[A-Za-z0-9+._-]+$/, 'Use letters, digits, + . _ - only (it names CSV columns)'),
  antibodyClone: z.string().trim().max(80).default(''),
  fluorophore: z.string().trim().max(80).default(''),
  excitationNm: z.number().min(200).max(1200).nullable().default(null),
  emissionNm: z.number().min(200).max(1200).nullable().default(null),
});
export const PanelRequest = z.object({ channels: z.array(PanelChannel).min(1, 'Give at least one channel').max(16) })
  .refine((p) => new Set(p.channels.map((c) => c.marker.toLowerCase())).size === p.channels.length, 'Each marker may appear once');
