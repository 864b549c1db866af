// mulberry32: a small seeded PRNG (public-domain algorithm), so randomised test cases are the same every run; the
// core's own (web/core/seeded-random.ts), re-exported for the tests.
export { mulberry32 } from '../../web/core/seeded-random.ts';
