import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { actor } from '../../../../lib/http/actor';
import { DetectionSettingsRequest } from '../../../../lib/schemas/detectionSettings';
import { appDb } from '../../../../lib/services/appDb';
import { changeDetectionSettings } from '../../../../lib/services/fields/changeDetectionSettings';

/**
 * Saves a field's vesicle-detection settings (null = automatic defaults) and queues its ingestion again
 * (analysts). The job ends "registered" when the field has a registration, else "ready": linking must be re-run,
 * and the field's current link run stops being current at once.
 */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'change detection settings');
  const body = await parseJson(ctx.request, DetectionSettingsRequest);
  return Response.json(await changeDetectionSettings(db, actor(user, ctx), id, body.settings, body.expectedVersion), { status: 202 });
}) satisfies APIRoute;
