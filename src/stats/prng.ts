/**
 * Seeded pseudo-random numbers for resampling: xoshiro128** (Blackman & Vigna, 2018),
 * seeded through splitmix32 so that any 32-bit seed gives a well-mixed state.
 * Same seed -> same stream on every platform (pure 32-bit integer arithmetic).
 */
import { splitmix32Words } from '../core/prng.js';

export interface Prng {
  /** Uniform in [0, 1). */
  next(): number;
  /** Uniform integer in [0, n). */
  int(n: number): number;
}

export function createPrng(seed: number): Prng {
  const sm = splitmix32Words(seed);
  let a = sm();
  let b = sm();
  let c = sm();
  let d = sm();
  if ((a | b | c | d) === 0) a = 1;
  const nextU32 = (): number => {
    const r = Math.imul(rotl(Math.imul(b, 5) >>> 0, 7), 9) >>> 0;
    const t = (b << 9) >>> 0;
    c ^= a;
    d ^= b;
    b ^= c;
    a ^= d;
    c ^= t;
    d = rotl(d, 11);
    return r;
  };
  return {
    next: () => nextU32() / 4294967296,
    int: (n: number) => Math.floor((nextU32() / 4294967296) * n),
  };
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
