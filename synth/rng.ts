// Deterministic hashing and seeded random numbers: every scene value is a pure function of (seed, coordinates).
import { fnv1a32, mulberry32 } from '../web/core/seeded-random.ts';

/** 32-bit integer hash of up to four integers (a murmur3-style finaliser over a running mix). */
export function hash4(a: number, b: number, c = 0, d = 0): number {
  let h = Math.imul(a ^ 0x9e3779b9, 0x85ebca6b);
  h = Math.imul(h ^ (h >>> 13) ^ b, 0xc2b2ae35);
  h = Math.imul(h ^ (h >>> 16) ^ c, 0x27d4eb2f);
  h = Math.imul(h ^ (h >>> 15) ^ d, 0x165667b1);
  h ^= h >>> 15;
  h = Math.imul(h, 0x2c1b3c6d);
  h ^= h >>> 12;
  h = Math.imul(h, 0x297a2d39);
  h ^= h >>> 15;
  return h >>> 0;
}

/** Hash of a string (FNV-1a), for mixing names and dates into seeds. */
export const hashString = fnv1a32;

/** A small seeded generator (the core's mulberry32) with helpers for ranges and picks. */
export class Rng {
  private readonly gen: () => number;
  constructor(seed: number) {
    this.gen = mulberry32(seed);
  }
  /** Uniform in [0, 1). */
  next(): number {
    return this.gen();
  }
  range(lo: number, hi: number): number {
    return lo + (hi - lo) * this.next();
  }
  int(lo: number, hiInclusive: number): number {
    return lo + Math.floor(this.next() * (hiInclusive - lo + 1));
  }
  chance(p: number): boolean {
    return this.next() < p;
  }
  pick<T>(items: readonly T[]): T {
    return items[Math.floor(this.next() * items.length)];
  }
  /** Pick by weights (need not sum to 1). */
  weighted<T>(items: readonly (readonly [T, number])[]): T {
    const total = items.reduce((s, [, w]) => s + w, 0);
    let r = this.next() * total;
    for (const [v, w] of items) { r -= w; if (r < 0) return v; }
    return items[items.length - 1][0];
  }
  /** Approximately normal (sum of three uniforms), mean 0, sd 1. */
  normal(): number {
    return (this.next() + this.next() + this.next() - 1.5) * 2;
  }
}

/** Uniform [0,1) from a hash, for per-pixel noise. */
export function hashUnit(a: number, b: number, c = 0, d = 0): number {
  return hash4(a, b, c, d) / 4294967296;
}

/** Smooth value noise in [0,1) on a lattice of `cellM`, at world position (xM, yM). */
export function valueNoise(seed: number, xM: number, yM: number, cellM: number): number {
  const gx = xM / cellM;
  const gy = yM / cellM;
  const ix = Math.floor(gx);
  const iy = Math.floor(gy);
  const fx = gx - ix;
  const fy = gy - iy;
  const sx = fx * fx * (3 - 2 * fx);
  const sy = fy * fy * (3 - 2 * fy);
  const a = hashUnit(seed, ix, iy);
  const b = hashUnit(seed, ix + 1, iy);
  const c = hashUnit(seed, ix, iy + 1);
  const d = hashUnit(seed, ix + 1, iy + 1);
  return a + (b - a) * sx + (c - a) * sy + (a - b - c + d) * sx * sy;
}
