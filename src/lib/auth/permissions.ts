/**
 * Who may do what: pure functions of the signed-in user and their membership, used by every
 * page and API route through the guards in session.ts.
 */
export type Role = 'admin' | 'biologist' | 'analyst' | 'collaborator';
export type MemberRole = 'biologist' | 'analyst' | 'collaborator';

export interface SessionUser {
  id: string;
  email: string;
  name: string;
  role: Role;
}

export type Action =
  | 'study.read' // see the study, its samples and fields (not collaborators: they see released results)
  | 'study.manage' // edit study, panel, members
  | 'sample.write' // create/edit samples, upload fields
  | 'field.analyse' // register, link, approve
  | 'field.remove' // remove a field that is neither approved nor released (a failed upload, say)
  | 'results.release' // release a sample's results
  | 'results.read'; // released results (everyone who is a member)

/** Global role check for actions that do not concern one study. */
export const isAdmin = (u: SessionUser) => u.role === 'admin';

/**
 * Whether `user`, who holds `membership` in a study (null when not a member), may do `action` there.
 * Admins may do everything; otherwise the study role decides.
 */
export function canInStudy(user: SessionUser, membership: MemberRole | null, action: Action): boolean {
  if (user.role === 'admin') return true;
  if (!membership) return false;
  switch (action) {
    case 'results.read':
      return true;
    case 'study.read':
      return membership !== 'collaborator';
    case 'study.manage':
      return false;
    case 'sample.write':
      return membership === 'biologist';
    case 'field.analyse':
      return membership === 'analyst';
    case 'results.release':
    case 'field.remove':
      return membership === 'biologist' || membership === 'analyst';
  }
}

/** The navigation a role sees (the guards enforce the same rules on the server). */
export function navigationFor(role: Role): { href: string; label: string }[] {
  const items = [{ href: '/', label: 'Studies' }];
  if (role === 'biologist') items.push({ href: '/upload', label: 'Upload fields' });
  if (role === 'analyst') items.push({ href: '/queue', label: 'Analysis queue' });
  if (role === 'collaborator') items.push({ href: '/results', label: 'Released results' });
  if (role === 'admin') {
    items.push({ href: '/admin/users', label: 'People' });
    items.push({ href: '/admin/audit', label: 'Audit log' });
    items.push({ href: '/admin/mail', label: 'Outbox' });
  }
  return items;
}
