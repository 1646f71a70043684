export { analyzeField } from './analyzeField';
export { fieldStages } from './fieldStages';
export { mergeSpots } from './mergeSpots';
export { DEFAULT_EMISSION_NM, DEFAULT_NUMERICAL_APERTURE } from './opticsDefaults';
export { parseFiducialCsv } from './parseFiducialCsv';
export { refineFiducialPairs, type RefineFiducialPairsOptions } from './refineFiducialPairs';
export { vesicleCsvColumns, vesicleCsvCells, vesicleCsvTable, type VesicleCsvCell } from './vesicleCsv';
export { vesicleColumns, type VesicleCell, type VesicleColumn } from './vesicleColumns';
export type * from './types';
