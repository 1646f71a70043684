import type { APIRoute } from 'astro';
import { eq } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { notFound } from '../../../../lib/http/errors';
import { requireStudyAction } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { studies } from '../../../../lib/db/schema';
import { audit } from '../../../../lib/audit';
import { CameraModelRequest, type CameraModelSetting } from '../../../../lib/schemas/cameraModel';
import { clientAddress } from '../../../../lib/http/context';

type Db = Awaited<ReturnType<typeof getDb>>;

/** The study's camera model; null when not set (linking then estimates it from each frame). */
async function readCamera(db: Db, id: string): Promise<CameraModelSetting | null> {
  const [s] = await db.select({ o: studies.cameraOffsetCounts, g: studies.cameraGainCountsPerPhoton, r: studies.cameraReadNoiseCounts }).from(studies).where(eq(studies.id, id));
  if (!s) throw notFound('That study');
  return s.o == null || s.g == null || s.r == null ? null : { offsetCounts: s.o, gainCountsPerPhoton: s.g, readNoiseCounts: s.r };
}

/** The study's camera noise model (lab members). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  await requireStudyAction(db, ctx.locals, id, 'study.read', 'see this study\'s analysis settings');
  return Response.json({ camera: await readCamera(db, id) });
}) satisfies APIRoute;

/**
 * Sets the camera noise model used by linking (analysts, admins): offset, gain and read noise together, or null to
 * estimate them from each frame. Fields already linked keep their results until they are linked again.
 */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'field.analyse', 'change the camera model');
  const body = await parseJson(ctx.request, CameraModelRequest);
  const before = await readCamera(db, id);
  const c = body.camera;
  await db.update(studies).set({
    cameraOffsetCounts: c?.offsetCounts ?? null, cameraGainCountsPerPhoton: c?.gainCountsPerPhoton ?? null, cameraReadNoiseCounts: c?.readNoiseCounts ?? null,
  }).where(eq(studies.id, id));
  if (JSON.stringify(before) !== JSON.stringify(c)) {
    await audit(db, { action: 'panel.changed', actorId: user.id, actorEmail: user.email, targetType: 'study', targetId: id, ip: clientAddress(ctx), details: { camera: { from: before, to: c } } });
  }
  return Response.json({ camera: await readCamera(db, id) });
}) satisfies APIRoute;
