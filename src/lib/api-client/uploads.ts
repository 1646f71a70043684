import { api, putWithProgress } from './http';
import { PresignReply, InspectReply, type FieldCreateRequest } from '../schemas/fields';
import { z } from 'zod';

/** Sends one file: presign → PUT straight to storage → server inspection. */
export async function uploadFile(studyId: string, file: File, onProgress: (f: number) => void) {
  const { uploadId, url } = await api('/api/uploads', PresignReply, { method: 'POST', json: { studyId, fileName: file.name, sizeBytes: file.size } });
  await putWithProgress(url, file, onProgress);
  return api(`/api/uploads/${uploadId}/inspect`, InspectReply, { method: 'POST', json: {} });
}

export const createField = (body: FieldCreateRequest) =>
  api('/api/fields', z.object({ id: z.string(), status: z.string() }), { method: 'POST', json: body });
