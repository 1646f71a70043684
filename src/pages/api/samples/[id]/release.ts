import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { z } from 'zod';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireRole, requireStudyAction } from '../../../../lib/auth/session';
import { conflict, notFound } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { createRelease } from '../../../../lib/db/queries/releases';
import { getSampleContext } from '../../../../lib/db/queries/sampleSelection';
import { audit } from '../../../../lib/audit';
import { clientAddress } from '../../../../lib/http/context';

const ReleaseRequest = z.object({ expectedVersion: z.number().int().min(0).optional() });

/** Releases the sample's current analysis to the study's collaborators as a new version. */
export const POST = handle(async (ctx) => {
  requireRole(ctx.locals, ['admin', 'biologist', 'analyst'], 'release results');
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const sample = await getSampleContext(db, id);
  if (!sample) throw notFound('That sample');
  const { user } = await requireStudyAction(db, ctx.locals, sample.studyId, 'results.release', 'release results of this study');
  // Optional body { expectedVersion }: the latest release version the person saw (0 for none).
  const hasBody = (ctx.request.headers.get('content-length') ?? '0') !== '0' || ctx.request.headers.has('content-type');
  const body = hasBody ? await parseJson(ctx.request, ReleaseRequest) : { expectedVersion: undefined };
  const out = await createRelease(db, id, user.id, body.expectedVersion);
  if (!out.ok) {
    switch (out.reason) {
      case 'no_fields': throw conflict(`Sample ${sample.code} has no fields yet; upload and analyse fields before releasing.`);
      case 'not_approved': {
        const listed = out.notApprovedFields.slice(0, 5).map((f) => `${f.name} (${f.status})`).join(', ');
        const more = out.notApprovedFields.length > 5 ? ` and ${out.notApprovedFields.length - 5} more` : '';
        throw conflict(`${out.notApproved} of ${out.total} field(s) of sample ${sample.code} are not approved yet: ${listed}${more}. `
          + 'Approve every field before releasing; a field that failed or is not worth analysing can be removed with "Remove field" on its field page.');
      }
      case 'no_link_runs': throw conflict(`${out.fieldsWithout} field(s) of sample ${sample.code} have no current linking; link them again before releasing.`);
      case 'version_taken': throw conflict(`Someone else released sample ${sample.code} in the meantime. Reload to see the new version; release again only if the data changed.`);
    }
  }
  await audit(db, {
    action: 'sample.released', actorId: user.id, actorEmail: user.email, targetType: 'sample', targetId: id, ip: clientAddress(ctx),
    details: { version: out.release.version, linkRunIds: out.release.linkRunIds, sampleCode: sample.code },
  });
  return Response.json(out.release, { status: 201 });
}) satisfies APIRoute;
