/**
 * Confirms a field from staged uploads: re-inspects every file (nothing the browser says is trusted),
 * checks channel count and pixel sizes, moves the objects under the field, and records the field and
 * its files in one transaction. When anything fails after the copy, the copies are removed, so no
 * row ever points at a missing object and no object is left without its row.
 */
import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fields, fieldFiles } from '../db/schema';
import type { Storage } from '../storage/client';
import { rawFileKey } from '../storage/keys';
import { copyObject, deleteObject } from '../storage/objects';
import { HttpError } from '../http/errors';
import type { FieldCreateRequest } from '../schemas/fields';
import { inspectStagedUpload, type UploadLimits } from './staging';
import { choosePixelSize } from './choosePixelSize';

const unprocessable = (code: string, message: string) => new HttpError(422, code, message);

export async function createField(
  db: Db,
  st: Storage,
  userId: string,
  body: FieldCreateRequest,
  panelSize: number,
  limits: UploadLimits,
) {
  const ids = [body.topographyUploadId, ...body.fluorescenceUploadIds];
  if (new Set(ids).size !== ids.length) throw new HttpError(400, 'validation_failed', 'The same upload is listed twice.');
  const topo = await inspectStagedUpload(st, userId, body.topographyUploadId, limits);
  const fls = [];
  for (const id of body.fluorescenceUploadIds) fls.push(await inspectStagedUpload(st, userId, id, limits));

  if (topo.meta.pageCount !== 1) {
    throw unprocessable('topography_pages', `The height map file has ${topo.meta.pageCount} pages; upload a single-page height map.`);
  }
  const channels = fls.reduce((n, f) => n + f.meta.pageCount, 0);
  if (panelSize > 0 && channels !== panelSize) {
    throw unprocessable('channel_count_mismatch', `The fluorescence files hold ${channels} channel(s) but the study's marker panel has ${panelSize}. Upload one frame per panel channel, or a stack with ${panelSize} pages.`);
  }
  const flSize = { w: fls[0].meta.width, h: fls[0].meta.height };
  if (fls.some((f) => f.meta.width !== flSize.w || f.meta.height !== flSize.h)) {
    throw unprocessable('frame_size_mismatch', 'The fluorescence frames differ in size; every channel of a field must have the same width and height.');
  }
  // a typed pixel size wins; a file's uncalibrated or implausible one is never used
  const afm = choosePixelSize('afm', topo.meta, body.settings.afmPixelNm);
  if (afm.valueNm === null) throw unprocessable('pixel_size_missing', afm.error!);
  const afmPixelNm = afm.valueNm;
  const fl = choosePixelSize('fluorescence', fls[0].meta, body.settings.flPixelNm);
  if (fl.valueNm === null) throw unprocessable('pixel_size_missing', fl.error!);
  const flPixelNm = fl.valueNm;
  if (body.settings.channelEmissionNm.length && body.settings.channelEmissionNm.length !== channels) {
    throw unprocessable('emission_count_mismatch', `Give one emission wavelength per channel (${channels}), or none to use the panel's.`);
  }

  // move staged objects under the field
  const fieldId = randomUUID();
  const staged = [topo, ...fls];
  const files = staged.map((s, i) => ({ id: randomUUID(), staged: s, kind: i === 0 ? 'topography' as const : 'fluorescence' as const }));
  const copied: string[] = [];
  try {
    for (const f of files) {
      const key = rawFileKey(fieldId, f.id);
      await copyObject(st, f.staged.key, key);
      copied.push(key);
    }
    let channelIndex = 0;
    await db.transaction(async (tx) => {
      await tx.insert(fields).values({
        id: fieldId,
        sampleId: body.sampleId,
        name: body.name,
        status: 'ingesting',
        afmPixelNm,
        afmScanSizeNm: body.settings.afmScanSizeNm ?? afmPixelNm * topo.meta.width,
        tipRadiusNm: body.settings.tipRadiusNm,
        imagingMedium: body.settings.imagingMedium,
        scanMode: body.settings.scanMode,
        flPixelNm,
        objectiveNa: body.settings.objectiveNa,
        exposureMs: body.settings.exposureMs,
        channelEmissionNm: body.settings.channelEmissionNm,
        afmWidthPx: topo.meta.width,
        afmHeightPx: topo.meta.height,
        flWidthPx: flSize.w,
        flHeightPx: flSize.h,
        createdBy: userId,
        progress: { stage: 'queued', fraction: 0 },
      });
      for (const f of files) {
        await tx.insert(fieldFiles).values({
          id: f.id,
          fieldId,
          kind: f.kind,
          channelIndex: f.kind === 'fluorescence' ? channelIndex : null,
          objectKey: rawFileKey(fieldId, f.id),
          originalName: (body.fileNames[f.staged.reply.uploadId] ?? 'upload.tif').replace(/[\\/]/g, '_'),
          sizeBytes: f.staged.reply.sizeBytes,
          meta: f.staged.reply as unknown as Record<string, unknown>,
        });
        if (f.kind === 'fluorescence') channelIndex += f.staged.meta.pageCount;
      }
    });
  } catch (e) {
    await Promise.allSettled(copied.map((k) => deleteObject(st, k)));
    throw e;
  }
  await Promise.allSettled(staged.map((s) => deleteObject(st, s.key)));
  const [row] = await db.select().from(fields).where(eq(fields.id, fieldId));
  return row;
}
