import type { APIRoute } from 'astro';
import { count, eq } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { conflict } from '../../../../lib/http/errors';
import { appAccessCache, requireStudyAction } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { markerChannels, fields, samples } from '../../../../lib/db/schema';
import { listPanel } from '../../../../lib/db/queries/studies';
import { audit } from '../../../../lib/audit';
import { PanelRequest } from '../../../../lib/schemas/people';
import { clientAddress } from '../../../../lib/http/context';

/**
 * Replaces the study's marker panel (biologists, admins). Once fields exist, the number of channels
 * is fixed: their files were checked against it.
 */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'sample.write', 'edit the marker panel');
  const body = await parseJson(ctx.request, PanelRequest);
  const [{ n }] = await db.select({ n: count() }).from(fields).innerJoin(samples, eq(samples.id, fields.sampleId)).where(eq(samples.studyId, id));
  const current = await listPanel(db, id);
  if (n > 0 && current.length !== body.channels.length) {
    throw conflict(`This study already has ${n} field(s) uploaded with ${current.length} channel(s); the panel can be renamed or corrected but must keep ${current.length} channel(s).`);
  }
  await db.transaction(async (tx) => {
    await tx.delete(markerChannels).where(eq(markerChannels.studyId, id));
    // a marker keeps the positivity settings analysts gave it (k, hand-set threshold) when the panel is edited
    const kept = new Map(current.map((c) => [c.marker, { positivityK: c.positivityK, manualThresholdCounts: c.manualThresholdCounts }]));
    await tx.insert(markerChannels).values(body.channels.map((c, channelIndex) => ({ ...kept.get(c.marker), ...c, studyId: id, channelIndex })));
  });
  appAccessCache(db)?.forget({ panelOf: id });
  await audit(db, { action: 'panel.changed', actorId: user.id, actorEmail: user.email, targetType: 'study', targetId: id, ip: clientAddress(ctx), details: { panel: body.channels.map((c) => c.marker) } });
  return Response.json({ channels: await listPanel(db, id) });
}) satisfies APIRoute;
