export { benjaminiHochberg } from './benjaminiHochberg';
export { chiSquare2x2, type ChiSquare2x2Options, type ChiSquare2x2Result } from './chiSquare2x2';
export { compareProportions, type CompareProportionsOptions, type CompareProportionsResult } from './compareProportions';
export { fisherExact, type FisherExactResult } from './fisherExact';
export { mannWhitneyU, type MannWhitneyUOptions, type MannWhitneyUResult } from './mannWhitneyU';
export { newcombeDifference, type NewcombeDifferenceResult } from './newcombeDifference';
export { wilsonInterval, type WilsonIntervalResult } from './wilsonInterval';
export type { Alternative, Table2x2 } from './types';
