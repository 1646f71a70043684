export type {
  TiffLimits, TiffMetadata, TiffPageInfo, DecodedPage, DecodedTiff, SampleFormat,
} from './tiffTypes';
export type { TiffPageInput, WriteTiffOptions } from './writeTiff';
export type { Raster, ColourMapOptions, ColourMapResult, ColourBarStop } from './colourMapHeight';
export type { ContrastResult } from './contrastFromPercentiles';
export type { DeepZoomOptions, DeepZoomLevel, DeepZoomTile, DeepZoomResult } from './buildDeepZoom';
export type { DecodeInWorkerOptions } from './decodeInWorker';
