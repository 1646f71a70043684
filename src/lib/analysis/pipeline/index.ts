export { analyzeField } from './analyzeField';
export { fieldStages } from './fieldStages';
export { mergeSpots } from './mergeSpots';
export { parseFiducialCsv } from './parseFiducialCsv';
export { refineFiducialPairs, type RefineFiducialPairsOptions } from './refineFiducialPairs';
export { vesicleCsv, vesicleCsvHeader, vesicleCsvRow } from './vesicleCsv';
export type * from './types';
