import type { z } from 'zod';
import { count, eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { markerChannels, fields, samples } from '../../db/schema';
import { listPanel } from '../../db/queries/studies';
import { conflict } from '../../http/errors';
import { appAccessCache } from '../../auth/session';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { PanelRequest } from '../../schemas/people';

/**
 * Replaces the study's marker panel in one transaction. Once fields exist the number of channels is fixed (their
 * files were checked against it); a marker that stays keeps the positivity settings analysts gave it.
 * @returns the panel as stored, in channel order
 * @throws HttpError 409 `conflict` when fields exist and the number of channels would change
 */
export async function replacePanel(db: Db, by: Actor, studyId: string, channels: z.infer<typeof PanelRequest>['channels']) {
  const [{ n }] = await db.select({ n: count() }).from(fields).innerJoin(samples, eq(samples.id, fields.sampleId)).where(eq(samples.studyId, studyId));
  const current = await listPanel(db, studyId);
  if (n > 0 && current.length !== channels.length) {
    throw conflict(`This study already has ${n} field(s) uploaded with ${current.length} channel(s); the panel can be renamed or corrected but must keep ${current.length} channel(s).`);
  }
  await db.transaction(async (tx) => {
    await tx.delete(markerChannels).where(eq(markerChannels.studyId, studyId));
    const kept = new Map(current.map((c) => [c.marker, { positivityK: c.positivityK, manualThresholdCounts: c.manualThresholdCounts }]));
    await tx.insert(markerChannels).values(channels.map((c, channelIndex) => ({ ...kept.get(c.marker), ...c, studyId, channelIndex })));
  });
  appAccessCache(db)?.forget({ panelOf: studyId });
  await audit(db, { action: 'panel.changed', actorId: by.id, actorEmail: by.email, targetType: 'study', targetId: studyId, ip: by.ip, details: { panel: channels.map((c) => c.marker) } });
  return listPanel(db, studyId);
}
