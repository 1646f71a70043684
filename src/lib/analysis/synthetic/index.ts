export { createRng } from './random';
export type { Rng } from './random';
export { makeHeightScene } from './makeHeightScene';
export type * from './types';
