/**
 * Who may see which results: the server-side guard shared by the results pages and API routes.
 * Collaborators see only released samples of their studies, and only the latest release; lab members
 * (biologists, analysts, admins) may also preview the current, unreleased link runs.
 */
import type { Db } from '../db/client';
import { requireStudyAction } from '../auth/session';
import { canInStudy, type SessionUser } from '../auth/permissions';
import { HttpError, notFound } from '../http/errors';
import { getSampleSelectionFacts, type SampleContext } from '../db/queries/sampleSelection';
import type { ReleaseInfo, ResultSource } from './types';

export interface ResultsSelection {
  user: SessionUser;
  sample: SampleContext;
  source: ResultSource;
  release: ReleaseInfo | null;
  linkRunIds: string[];
  /** Whether the user may see unreleased lab data (offer the preview). */
  seesLab: boolean;
  /** Changes whenever anything the per-field breakdown shows changes (see getSampleSelectionFacts). */
  fieldsFingerprint: string;
}

/** The answer for a sample a collaborator may not see: the same whether unreleased or another study's. */
export const notReleased = () =>
  new HttpError(403, 'forbidden', 'These results are not released to you. Ask the lab to release the sample, or check that you are a member of its study.');

/**
 * Resolves which vesicle rows of a sample the signed-in user may see.
 *
 * @param db - database handle
 * @param locals - Astro locals with the session user
 * @param sampleId - the sample (uuid)
 * @param source - 'released' (latest release) or 'current' (lab members only)
 * @returns the sample, the release shown and its link run ids
 * @throws HttpError 401 anonymous, 404 no such sample, 403 not a member / not released / preview not allowed, 404 not_released for lab members
 */
export async function selectSampleResults(db: Db, locals: App.Locals, sampleId: string, source: ResultSource): Promise<ResultsSelection> {
  const facts = await getSampleSelectionFacts(db, sampleId);
  if (!facts) {
    if (!locals.user) throw new HttpError(401, 'unauthorized', 'Sign in to continue.');
    throw notFound('That sample');
  }
  const { sample } = facts;
  let access;
  try {
    access = await requireStudyAction(db, locals, sample.studyId, 'results.read', 'see results of this study');
  } catch (e) {
    if (e instanceof HttpError && e.status === 403) throw notReleased();
    throw e;
  }
  const { user, membership } = access;
  const seesLab = canInStudy(user, membership, 'study.read');
  if (source === 'current') {
    if (!seesLab) throw notReleased();
    return { user, sample, source, release: null, linkRunIds: facts.currentLinkRunIds, seesLab, fieldsFingerprint: facts.fieldsFingerprint };
  }
  const release = facts.latestRelease;
  if (!release) {
    if (!seesLab) throw notReleased();
    throw new HttpError(404, 'not_released', `Sample ${sample.code} has no release yet. Approve all its fields and release it, or preview the current analysis (source=current).`);
  }
  const { linkRunIds, ...info } = release;
  return { user, sample, source, release: info, linkRunIds, seesLab, fieldsFingerprint: facts.fieldsFingerprint };
}
