import { config } from '../config';
import type { UploadLimits } from './staging';

export const uploadLimits = (): UploadLimits => {
  const c = config();
  return { maxUploadBytes: c.MAX_UPLOAD_BYTES, maxPixels: c.MAX_IMAGE_PIXELS, maxDecodedBytes: c.MAX_DECODED_BYTES };
};
