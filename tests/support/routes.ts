/**
 * Every API route with who may call it. The authorization matrix runs each against anonymous,
 * each role and a non-member; a completeness test makes sure a new route cannot skip this table.
 * `allowed`: roles that pass the guard (they then get 2xx, or 400/404 for the deliberately empty body).
 * Paths use :study (the demo study), :other (a study with no demo members) and :user (a user id).
 */
export type Who = 'admin' | 'biologist' | 'analyst' | 'collaborator';
export interface RouteSpec {
  file: string;
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  path: string;
  allowed: Who[] | 'public';
  /** For study-scoped routes: the same call on a study the user is not a member of must give 403. */
  studyScoped?: boolean;
  body?: unknown;
}

const all: Who[] = ['admin', 'biologist', 'analyst', 'collaborator'];

export const ROUTES: RouteSpec[] = [
  { file: 'me.ts', method: 'GET', path: '/api/me', allowed: all },
  { file: 'studies/index.ts', method: 'GET', path: '/api/studies', allowed: all },
  { file: 'studies/index.ts', method: 'POST', path: '/api/studies', allowed: ['admin'], body: {} },
  { file: 'studies/[id]/index.ts', method: 'GET', path: '/api/studies/:study', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'studies/[id]/members.ts', method: 'PUT', path: '/api/studies/:study/members', allowed: ['admin'], studyScoped: true, body: {} },
  { file: 'admin/users/index.ts', method: 'GET', path: '/api/admin/users', allowed: ['admin'] },
  { file: 'admin/users/[id].ts', method: 'PATCH', path: '/api/admin/users/:user', allowed: ['admin'], body: {} },
  { file: 'admin/invitations.ts', method: 'POST', path: '/api/admin/invitations', allowed: ['admin'], body: {} },
  { file: 'admin/mail.ts', method: 'GET', path: '/api/admin/mail', allowed: ['admin'] },
  { file: 'invitations/accept.ts', method: 'POST', path: '/api/invitations/accept', allowed: 'public', body: {} },
  { file: 'password-reset.ts', method: 'POST', path: '/api/password-reset', allowed: 'public', body: {} },
];
