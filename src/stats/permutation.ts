/**
 * Paired sign-flip permutation test on a mean difference (Fisher's randomisation test
 * for paired data). Under the null hypothesis that the two configurations are
 * exchangeable on every unit (pair or group), each unit's difference is equally
 * likely to have either sign.
 *
 * Statistic: T = sum_i d_i (equivalent to the mean difference for fixed n).
 * Two-sided p-value:
 *  - exact (n <= exactMaxUnits, default 20): p = #{sign patterns s : |sum s_i d_i| >= |T|} / 2^n,
 *    the identity pattern included, so p >= 2^-n;
 *  - Monte Carlo above that: p = (1 + #{random patterns with |T*| >= |T|}) / (1 + M),
 *    M random patterns from a seeded PRNG (the identity counted once).
 * Ties are judged with a tolerance of 1e-12 * sum |d_i| so that rounding in the sums
 * does not split equal statistics.
 */
import { createPrng } from './prng.js';

// The option block has bootstrap.ts's shape (defaults, then an options interface); the two
// procedures share only the seed, so each keeps its own documented defaults.
export const DEFAULT_EXACT_MAX_UNITS = 20;
export const DEFAULT_PERMUTATIONS = 20000;

export interface SignFlipOptions {
  exactMaxUnits?: number;
  permutations?: number;
  seed?: number;
}

export interface SignFlipResult {
  /** Observed mean difference (sum / n). */
  meanDiff: number;
  p: number;
  exact: boolean;
  /** Sign patterns evaluated (2^n exact, or M + 1). */
  patterns: number;
  units: number;
}

/** All 2^k subset sums of signs over xs[from..from+k): out[mask] = sum (bit j set ? -x : +x). */
function halfSums(xs: ArrayLike<number>, from: number, k: number): Float64Array {
  const out = new Float64Array(1 << k);
  for (let mask = 0; mask < out.length; mask++) {
    let s = 0;
    for (let j = 0; j < k; j++) {
      const v = xs[from + j];
      s += (mask >> j) & 1 ? -v : v;
    }
    out[mask] = s;
  }
  return out;
}

export function signFlipTest(diffs: ArrayLike<number>, opts: SignFlipOptions = {}): SignFlipResult {
  const n = diffs.length;
  if (n === 0) return { meanDiff: NaN, p: NaN, exact: true, patterns: 0, units: 0 };
  let obs = 0;
  let absSum = 0;
  for (let i = 0; i < n; i++) {
    obs += diffs[i];
    absSum += Math.abs(diffs[i]);
  }
  const target = Math.abs(obs) - 1e-12 * absSum;
  const exactMax = Math.min(opts.exactMaxUnits ?? DEFAULT_EXACT_MAX_UNITS, 30);
  if (n <= exactMax) {
    // Meet in the middle: every pattern sum = A[i] + B[j], each half summed directly.
    const k1 = n >> 1;
    const A = halfSums(diffs, 0, k1);
    const B = halfSums(diffs, k1, n - k1);
    let count = 0;
    for (let i = 0; i < A.length; i++) {
      const a = A[i];
      for (let j = 0; j < B.length; j++) if (Math.abs(a + B[j]) >= target) count++;
    }
    const total = A.length * B.length;
    return { meanDiff: obs / n, p: count / total, exact: true, patterns: total, units: n };
  }
  const M = opts.permutations ?? DEFAULT_PERMUTATIONS;
  const rng = createPrng(opts.seed ?? 7919);
  let count = 0;
  for (let m = 0; m < M; m++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += rng.next() < 0.5 ? -diffs[i] : diffs[i];
    if (Math.abs(s) >= target) count++;
  }
  return { meanDiff: obs / n, p: (1 + count) / (1 + M), exact: false, patterns: M + 1, units: n };
}
