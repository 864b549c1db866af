// Bounded LRU of decoded file tiles (by byte budget), so overlapping windows decode each file tile once.

/** Something with a byte size that the cache can account for. */
export interface Sized {
  byteLength: number;
}

export interface TileCacheOptions {
  /** Budget for all cached values together, in bytes. Default 256 MiB. */
  maxBytes?: number;
}

export interface TileCacheStats {
  /** The budget now, in bytes. */
  maxBytes: number;
  hits: number;
  misses: number;
  evictions: number;
  bytes: number;
  entries: number;
}

/**
 * Least-recently-used map from key to a decoded value, bounded by the sum of `byteLength`s.
 * `getOrLoad` also de-duplicates concurrent loads of the same key (one decode, many waiters).
 * A single value larger than the budget is returned but not kept.
 */
export class TileCache<V extends Sized> {
  private budgetBytes: number;
  private readonly map = new Map<string, V>();
  private readonly pending = new Map<string, Promise<V>>();
  private bytes = 0;
  private hits = 0;
  private misses = 0;
  private evictions = 0;

  constructor(options: TileCacheOptions = {}) {
    const maxBytes = options.maxBytes ?? 256 * 1024 * 1024;
    if (!(maxBytes >= 0)) throw new Error(`TileCache maxBytes must be >= 0, got ${maxBytes}`);
    this.budgetBytes = maxBytes;
  }

  /** Budget for all cached values together, in bytes. */
  get maxBytes(): number {
    return this.budgetBytes;
  }

  /** Change the budget; a smaller one evicts the least recently used values at once. */
  setMaxBytes(maxBytes: number): void {
    if (!(maxBytes >= 0)) throw new Error(`TileCache maxBytes must be >= 0, got ${maxBytes}`);
    this.budgetBytes = maxBytes;
    this.evict();
  }

  /** The cached value (and mark it most recently used), or undefined. */
  get(key: string): V | undefined {
    const v = this.map.get(key);
    if (v === undefined) return undefined;
    this.map.delete(key);
    this.map.set(key, v);
    return v;
  }

  has(key: string): boolean {
    return this.map.has(key);
  }

  set(key: string, value: V): void {
    const old = this.map.get(key);
    if (old !== undefined) {
      this.bytes -= old.byteLength;
      this.map.delete(key);
    }
    if (value.byteLength > this.maxBytes) return;
    this.map.set(key, value);
    this.bytes += value.byteLength;
    this.evict();
  }

  /** Cached value, or the result of `load()` (stored); concurrent callers for one key share one load. */
  async getOrLoad(key: string, load: () => Promise<V>): Promise<V> {
    const hit = this.get(key);
    if (hit !== undefined) {
      this.hits++;
      return hit;
    }
    const inFlight = this.pending.get(key);
    if (inFlight) {
      this.hits++;
      return inFlight;
    }
    this.misses++;
    const p = load().then(
      (v) => {
        this.pending.delete(key);
        this.set(key, v);
        return v;
      },
      (err: unknown) => {
        this.pending.delete(key);
        throw err;
      },
    );
    this.pending.set(key, p);
    return p;
  }

  clear(): void {
    this.map.clear();
    this.bytes = 0;
  }

  stats(): TileCacheStats {
    return { maxBytes: this.budgetBytes, hits: this.hits, misses: this.misses, evictions: this.evictions, bytes: this.bytes, entries: this.map.size };
  }

  private evict(): void {
    while (this.bytes > this.maxBytes) {
      const oldest = this.map.keys().next();
      if (oldest.done) break;
      const v = this.map.get(oldest.value)!;
      this.map.delete(oldest.value);
      this.bytes -= v.byteLength;
      this.evictions++;
    }
  }
}
