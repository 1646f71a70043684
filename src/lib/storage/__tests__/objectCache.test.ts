import { describe, it, expect } from 'vitest';
import { createObjectCache } from '../objectCache';

describe('createObjectCache', () => {
  it('keeps at most maxBytes, dropping the least recently used first', () => {
    const c = createObjectCache(100);
    c.set('a', new Uint8Array(10));
    c.set('b', new Uint8Array(10));
    expect(c.get('a')?.length).toBe(10); // a is now the most recent
    for (let i = 0; i < 9; i++) c.set(`x${i}`, new Uint8Array(10)); // 110 bytes asked for: one must go
    expect(c.get('b')).toBeUndefined();
    expect(c.get('a')?.length).toBe(10);
    expect(c.calculatedSize).toBe(100);
  });

  it('counts a replaced object once', () => {
    const c = createObjectCache(100);
    for (let i = 0; i < 10; i++) c.set('a', new Uint8Array(10));
    for (let i = 0; i < 9; i++) c.set(`x${i}`, new Uint8Array(10));
    expect(c.calculatedSize).toBe(100);
    expect(c.get('a')?.length).toBe(10);
  });

  it('does not keep objects larger than an eighth of its size', () => {
    const c = createObjectCache(80);
    c.set('big', new Uint8Array(11));
    expect(c.get('big')).toBeUndefined();
    c.set('fits', new Uint8Array(10));
    expect(c.get('fits')?.length).toBe(10);
  });
});
