export { ImagingError, type ImagingErrorCode } from './decodeWorker.mjs';
