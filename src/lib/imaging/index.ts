// Image-file layer: TIFF inspection/decoding (in process or sandboxed), a TIFF writer, colour mapping and Deep Zoom tiles.
export { inspectTiff, DEFAULT_LIMITS } from './inspectTiff';
export { decodeTiff } from './decodeTiff';
export { ImagingError } from './errors';
export { decodeInWorker } from './decodeInWorker';
export { writeTiff } from './writeTiff';
export { colourMapHeight, VIRIDIS_RGB } from './colourMapHeight';
export { contrastFromPercentiles } from './contrastFromPercentiles';
export { buildDeepZoom, deepZoomLevels } from './buildDeepZoom';
export type * from './types';
