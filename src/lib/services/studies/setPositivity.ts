import type { z } from 'zod';
import { and, eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { markerChannels } from '../../db/schema';
import { listPositivity } from '../../db/queries/positivity';
import { HttpError } from '../../http/errors';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { PositivityRequest } from '../../schemas/positivity';
import { getPositivity } from './getPositivity';

/**
 * Sets k and an optional hand-set threshold (counts) for some of the study's markers, all in one transaction; the
 * markers that changed are audited. Fields already linked keep their results until they are linked again.
 * @returns the settings as stored and the fields now linked with other settings
 * @throws HttpError 400 `unknown_marker` when a marker is not in the panel (nothing is written)
 */
export async function setPositivity(db: Db, by: Actor, studyId: string, markers: z.infer<typeof PositivityRequest>['markers']) {
  const before = await listPositivity(db, studyId);
  const unknown = markers.filter((m) => !before.some((b) => b.marker === m.marker)).map((m) => m.marker);
  if (unknown.length) {
    throw new HttpError(400, 'unknown_marker', `${unknown.map((m) => `"${m}"`).join(', ')} ${unknown.length === 1 ? 'is' : 'are'} not in this study's panel (${before.map((b) => b.marker).join(', ') || 'no markers yet'}).`);
  }
  await db.transaction(async (tx) => {
    for (const m of markers) {
      await tx.update(markerChannels).set({ positivityK: m.positivityK, manualThresholdCounts: m.manualThresholdCounts })
        .where(and(eq(markerChannels.studyId, studyId), eq(markerChannels.marker, m.marker)));
    }
  });
  const changes = markers.flatMap((m) => {
    const old = before.find((b) => b.marker === m.marker)!;
    return old.positivityK === m.positivityK && old.manualThresholdCounts === m.manualThresholdCounts ? [] : [{
      marker: m.marker, from: { k: old.positivityK, manualThresholdCounts: old.manualThresholdCounts }, to: { k: m.positivityK, manualThresholdCounts: m.manualThresholdCounts },
    }];
  });
  if (changes.length) {
    await audit(db, { action: 'panel.changed', actorId: by.id, actorEmail: by.email, targetType: 'study', targetId: studyId, ip: by.ip, details: { positivity: changes } });
  }
  return getPositivity(db, studyId);
}
