/**
 * The seeded generator tests use for reproducible data: mulberry32 (public-domain
 * 32-bit generator, common practice for test data), from the project's one PRNG home.
 */
export { mulberry32 } from '../../src/core/prng.js';

/**
 * 32-bit linear congruential stream with the Numerical Recipes constants
 * (x' = 1664525 x + 1013904223 mod 2^32): each call returns the next unsigned word.
 * Tests take its high bits (>>> 24 for a byte) for texture.
 */
export function lcg32(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s;
  };
}

/** An image of n samples drawn by `sample` (default: a uniform byte 0..255) from a seeded stream. */
export function randomImage(
  rnd: () => number,
  n: number,
  sample: (rnd: () => number) => number = (r) => Math.floor(r() * 256),
): Float32Array {
  const img = new Float32Array(n);
  for (let i = 0; i < n; i++) img[i] = sample(rnd);
  return img;
}
