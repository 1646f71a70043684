/**
 * Every API route with who may call it. The authorization matrix runs each against anonymous,
 * each role and a non-member; a completeness test makes sure a new route cannot skip this table.
 * `allowed`: roles that pass the guard (they then get 2xx, or 400/404 for the deliberately empty body).
 * Paths and string values in bodies use placeholders: :study, :sample, :field (in the demo study),
 * and :user (a user id); for the non-member check they are swapped for a study with no demo members.
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
  // Results (issue 7). :sample is unreleased (one failed field): lab roles get 404 not_released / 409 on release;
  // a collaborator gets the same 403 as for another study's sample. Released data: tests/integration/results.test.ts.
  { file: 'samples/[id]/release.ts', method: 'POST', path: '/api/samples/:sample/release', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'samples/[id]/results.ts', method: 'GET', path: '/api/samples/:sample/results', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'samples/[id]/results.csv.ts', method: 'GET', path: '/api/samples/:sample/results.csv', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'samples/[id]/vesicles.csv.ts', method: 'GET', path: '/api/samples/:sample/vesicles.csv?source=current', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'studies/[id]/comparison.ts', method: 'GET', path: '/api/studies/:study/comparison', allowed: all, studyScoped: true },
  { file: 'studies/[id]/comparison.csv.ts', method: 'GET', path: '/api/studies/:study/comparison.csv?groupA=patient&groupB=healthy%20control', allowed: all, studyScoped: true },
];

ROUTES.push(
  { file: 'studies/[id]/samples.ts', method: 'GET', path: '/api/studies/:study/samples', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'studies/[id]/samples.ts', method: 'POST', path: '/api/studies/:study/samples', allowed: ['admin', 'biologist'], studyScoped: true, body: {} },
  { file: 'uploads/index.ts', method: 'POST', path: '/api/uploads', allowed: ['admin', 'biologist'], studyScoped: true, body: { studyId: ':study', fileName: 'probe.tif', sizeBytes: 1000 } },
  { file: 'uploads/[id]/inspect.ts', method: 'POST', path: '/api/uploads/00000000-0000-4000-8000-000000000000/inspect', allowed: ['admin', 'biologist'], body: {} },
  { file: 'fields/index.ts', method: 'POST', path: '/api/fields', allowed: ['admin', 'biologist'], studyScoped: true, body: { sampleId: ':sample', name: 'probe', topographyUploadId: '00000000-0000-4000-8000-000000000001', fluorescenceUploadIds: ['00000000-0000-4000-8000-000000000002'], settings: { objectiveNa: 1.4 } } },
  { file: 'fields/[id]/index.ts', method: 'GET', path: '/api/fields/:field', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'fields/[id]/retry.ts', method: 'POST', path: '/api/fields/:field/retry', allowed: ['admin', 'biologist'], studyScoped: true },
  { file: 'fields/[id]/detection.ts', method: 'GET', path: '/api/fields/:field/detection', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'fields/[id]/beads.csv.ts', method: 'GET', path: '/api/fields/:field/beads.csv', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'fields/[id]/tiles/[...path].ts', method: 'GET', path: '/api/fields/:field/tiles/height.dzi', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
);

ROUTES.push(
  { file: 'fields/[id]/registration/index.ts', method: 'GET', path: '/api/fields/:field/registration', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'fields/[id]/registration/index.ts', method: 'POST', path: '/api/fields/:field/registration', allowed: ['admin', 'analyst'], studyScoped: true, body: {} },
  { file: 'fields/[id]/registration/auto.ts', method: 'POST', path: '/api/fields/:field/registration/auto', allowed: ['admin', 'analyst'], studyScoped: true, body: {} },
);

ROUTES.push(
  { file: 'fields/[id]/link.ts', method: 'POST', path: '/api/fields/:field/link', allowed: ['admin', 'analyst'], studyScoped: true },
  { file: 'fields/[id]/review.ts', method: 'POST', path: '/api/fields/:field/review', allowed: ['admin', 'analyst'], studyScoped: true, body: {} },
  { file: 'vesicles/index.ts', method: 'GET', path: '/api/vesicles?fieldId=:field', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'vesicles/export.csv.ts', method: 'GET', path: '/api/vesicles/export.csv?sampleId=:sample', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
);

ROUTES.push(
  { file: 'studies/[id]/panel.ts', method: 'PUT', path: '/api/studies/:study/panel', allowed: ['admin', 'biologist'], studyScoped: true, body: {} },
);

ROUTES.push(
  // Field removal: the empty body is refused (400) after the guard, so the matrix never removes its probe field.
  { file: 'fields/[id]/index.ts', method: 'DELETE', path: '/api/fields/:field', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true, body: {} },
);

ROUTES.push(
  // Detection settings: the empty body is refused (400) after the guard, so the matrix never re-runs the probe field's ingestion.
  { file: 'fields/[id]/detection-settings.ts', method: 'PUT', path: '/api/fields/:field/detection-settings', allowed: ['admin', 'analyst'], studyScoped: true, body: {} },
);

// Positivity settings per marker (k, hand-set threshold) and re-linking the fields linked with other settings.
ROUTES.push(
  { file: 'studies/[id]/positivity.ts', method: 'GET', path: '/api/studies/:study/positivity', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'studies/[id]/positivity.ts', method: 'PUT', path: '/api/studies/:study/positivity', allowed: ['admin', 'analyst'], studyScoped: true, body: {} },
  { file: 'studies/[id]/relink.ts', method: 'POST', path: '/api/studies/:study/relink', allowed: ['admin', 'analyst'], studyScoped: true, body: {} },
);

// The study's camera noise model (offset, gain, read noise) used by linking.
ROUTES.push(
  { file: 'studies/[id]/camera.ts', method: 'GET', path: '/api/studies/:study/camera', allowed: ['admin', 'biologist', 'analyst'], studyScoped: true },
  { file: 'studies/[id]/camera.ts', method: 'PUT', path: '/api/studies/:study/camera', allowed: ['admin', 'analyst'], studyScoped: true, body: {} },
);
