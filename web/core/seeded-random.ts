// Seeded numbers shared by everything that must repeat exactly: mulberry32 (a public-domain 32-bit PRNG) and the
// FNV-1a 32-bit string hash. Used by the check-sample draw, file-defined CRS codes, the synthesizer and the training
// scene sets.

/** A uniform [0, 1) generator: the same seed always gives the same sequence (mulberry32). */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = Math.imul(a ^ (a >>> 15), a | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** FNV-1a 32-bit hash of a string (unsigned). */
export function fnv1a32(s: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 0x01000193);
  return h >>> 0;
}
