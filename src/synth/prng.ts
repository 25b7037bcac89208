/**
 * Seeded pseudo-random numbers for the synthetic renderer. Nothing in src/synth uses
 * Math.random: every random choice comes from an explicit seed.
 *
 * - splitmix32: a 32-bit variant of Steele, Lea & Flood's SplitMix (2014) with the
 *   murmur3-style finaliser constants; one state word, period 2^32 (the word stream
 *   and fmix32 live in src/core/prng.ts).
 * - hash32: an order-independent integer hash of up to three lattice coordinates and a
 *   seed, used for per-pixel jitter and for procedural textures (same finaliser).
 */

import { fmix32, splitmix32Words } from '../core/prng.js';

export { fmix32 };

/** A seeded generator of uniform floats in [0, 1). */
export interface Prng {
  /** Next uniform in [0, 1). */
  next(): number;
  /** Next unsigned 32-bit integer. */
  nextU32(): number;
  /** Next standard normal deviate (Box-Muller, one value per two uniforms). */
  gaussian(): number;
  /** Uniform in [lo, hi). */
  range(lo: number, hi: number): number;
  /** Integer in [0, n). */
  int(n: number): number;
  /** One element of a non-empty array. */
  pick<T>(items: readonly T[]): T;
}

/** Hash of integers (a, b, c) under a seed, as an unsigned 32-bit integer. */
export function hash32(a: number, b: number, c: number, seed: number): number {
  let h = fmix32((seed ^ 0x9e3779b9) >>> 0);
  h = fmix32((h ^ Math.imul(a | 0, 0x27d4eb2d)) >>> 0);
  h = fmix32((h ^ Math.imul(b | 0, 0x165667b1)) >>> 0);
  h = fmix32((h ^ Math.imul(c | 0, 0x9e3779b1)) >>> 0);
  return h;
}

/** hash32 mapped to [0, 1). */
export function hashUnit(a: number, b: number, c: number, seed: number): number {
  return hash32(a, b, c, seed) / 4294967296;
}

/** Derive an independent sub-seed from a seed and a small integer (stream id). */
export function subSeed(seed: number, stream: number): number {
  return hash32(stream, 0x5eed, 0, seed >>> 0);
}

/**
 * One draw of Marsaglia & Bray's polar method (1964) on a splitmix32 state: uniform
 * pairs (a, b) in [-1, 1)^2 until 0 < q = a^2 + b^2 < 1. Writes a, b and
 * sqrt(-2 ln q / q) to out[0..2] (two independent normals are a * out[2] and
 * b * out[2]) and returns the advanced state. For per-pixel noise loops: no objects,
 * no closures.
 */
export function polarDraw(state: number, out: Float64Array): number {
  let a: number;
  let b: number;
  let q: number;
  do {
    state = (state + 0x9e3779b9) >>> 0;
    a = (fmix32(state) / 4294967296) * 2 - 1;
    state = (state + 0x9e3779b9) >>> 0;
    b = (fmix32(state) / 4294967296) * 2 - 1;
    q = a * a + b * b;
  } while (q >= 1 || q === 0);
  out[0] = a;
  out[1] = b;
  out[2] = Math.sqrt((-2 * Math.log(q)) / q);
  return state;
}

/** splitmix32 generator with an explicit seed. */
export function splitmix32(seed: number): Prng {
  let spare = NaN;
  const nextU32 = splitmix32Words(seed);
  const next = (): number => nextU32() / 4294967296;
  return {
    nextU32,
    next,
    gaussian(): number {
      if (spare === spare) {
        const s = spare;
        spare = NaN;
        return s;
      }
      // Box-Muller (1958); u1 in (0, 1] so the log is finite.
      const u1 = 1 - next();
      const u2 = next();
      const r = Math.sqrt(-2 * Math.log(u1));
      spare = r * Math.sin(2 * Math.PI * u2);
      return r * Math.cos(2 * Math.PI * u2);
    },
    range(lo: number, hi: number): number {
      return lo + (hi - lo) * next();
    },
    int(n: number): number {
      return Math.floor(next() * n);
    },
    pick<T>(items: readonly T[]): T {
      return items[Math.floor(next() * items.length)];
    },
  };
}
