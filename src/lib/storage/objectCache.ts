/**
 * A small in-process cache of immutable objects (rendered tiles, detection results), bounded in
 * bytes, least recently used out first. Keys carry the field's version, so re-ingested data is
 * never served stale. Each web process has its own; nothing here is a source of truth.
 */
export class ObjectCache {
  private readonly map = new Map<string, Uint8Array>();
  private bytes = 0;
  constructor(private readonly maxBytes: number) {}

  get(key: string): Uint8Array | undefined {
    const v = this.map.get(key);
    if (v) {
      this.map.delete(key);
      this.map.set(key, v);
    }
    return v;
  }

  set(key: string, value: Uint8Array) {
    if (value.length > this.maxBytes / 8) return;
    const old = this.map.get(key);
    if (old) this.bytes -= old.length;
    this.map.set(key, value);
    this.bytes += value.length;
    for (const [k, v] of this.map) {
      if (this.bytes <= this.maxBytes) break;
      this.map.delete(k);
      this.bytes -= v.length;
    }
  }
}

const g = globalThis as unknown as { __heightlightObjectCache?: ObjectCache };
/** The process-wide cache (64 MB). */
export const objectCache = () => (g.__heightlightObjectCache ??= new ObjectCache(64 * 1024 * 1024));
