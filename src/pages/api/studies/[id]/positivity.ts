import type { APIRoute } from 'astro';
import { and, eq } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { HttpError } from '../../../../lib/http/errors';
import { requireStudyAction } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { markerChannels } from '../../../../lib/db/schema';
import { fieldsLinkedWithOtherSettings, listPositivity } from '../../../../lib/db/queries/positivity';
import { audit } from '../../../../lib/audit';
import { PositivityRequest } from '../../../../lib/schemas/positivity';
import { clientAddress } from '../../../../lib/http/context';

/** The study's positivity settings per marker and the fields linked with other settings (lab members). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  await requireStudyAction(db, ctx.locals, id, 'study.read', 'see this study\'s analysis settings');
  return Response.json({ markers: await listPositivity(db, id), fieldsLinkedWithOtherSettings: await fieldsLinkedWithOtherSettings(db, id) });
}) satisfies APIRoute;

/**
 * Sets k (mean + k SD) and an optional hand-set threshold (counts) for some of the study's markers (analysts, admins).
 * Fields already linked keep their results until they are linked again; the answer lists them.
 */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'field.analyse', 'change positivity thresholds');
  const body = await parseJson(ctx.request, PositivityRequest);
  const before = await listPositivity(db, id);
  const unknown = body.markers.filter((m) => !before.some((b) => b.marker === m.marker)).map((m) => m.marker);
  if (unknown.length) {
    throw new HttpError(400, 'unknown_marker', `${unknown.map((m) => `"${m}"`).join(', ')} ${unknown.length === 1 ? 'is' : 'are'} not in this study's panel (${before.map((b) => b.marker).join(', ') || 'no markers yet'}).`);
  }
  await db.transaction(async (tx) => {
    for (const m of body.markers) {
      await tx.update(markerChannels).set({ positivityK: m.positivityK, manualThresholdCounts: m.manualThresholdCounts })
        .where(and(eq(markerChannels.studyId, id), eq(markerChannels.marker, m.marker)));
    }
  });
  const changes = body.markers.flatMap((m) => {
    const old = before.find((b) => b.marker === m.marker)!;
    return old.positivityK === m.positivityK && old.manualThresholdCounts === m.manualThresholdCounts ? [] : [{
      marker: m.marker, from: { k: old.positivityK, manualThresholdCounts: old.manualThresholdCounts }, to: { k: m.positivityK, manualThresholdCounts: m.manualThresholdCounts },
    }];
  });
  if (changes.length) {
    await audit(db, { action: 'panel.changed', actorId: user.id, actorEmail: user.email, targetType: 'study', targetId: id, ip: clientAddress(ctx), details: { positivity: changes } });
  }
  return Response.json({ markers: await listPositivity(db, id), fieldsLinkedWithOtherSettings: await fieldsLinkedWithOtherSettings(db, id) });
}) satisfies APIRoute;
