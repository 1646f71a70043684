/**
 * Small seeded pseudo-random generator (mulberry32): same seed, same sequence, so RANSAC results
 * are reproducible. Not for cryptography.
 *
 * @param seed - any 32-bit integer
 * @returns a function giving uniform numbers in [0, 1)
 * @see https://gist.github.com/tommyettinger/46a874533244883189143505d203312c (mulberry32, public domain)
 */
export function mulberry32(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
