import { describe, expect, it } from 'vitest';
import { bcaIntervals, bcaMean } from '../../src/stats/bootstrap.js';
import { createPrng } from '../../src/stats/prng.js';
import { runPython } from './python.js';

/** Exponential(1) draws by inversion: known mean 1, skewed like per-pair error figures. */
function expSample(rng: ReturnType<typeof createPrng>, n: number): number[] {
  return Array.from({ length: n }, () => -Math.log(1 - rng.next()));
}

function coverage(n: number, reps: number, resamples: number): number {
  const rng = createPrng(1000 + n);
  let hit = 0;
  for (let r = 0; r < reps; r++) {
    const ci = bcaMean(expSample(rng, n), { resamples, seed: r + 1 })!;
    if (ci.lo <= 1 && 1 <= ci.hi) hit++;
  }
  return hit / reps;
}

describe('BCa bootstrap', () => {
  it('covers the true mean near the nominal 95 % at 50 pairs', () => {
    // 300 repetitions: binomial SE at 0.95 is 0.0126. BCa on skewed data at n = 50
    // covers roughly 0.93-0.94 (Efron & Tibshirani 1993, ch. 14); band 0.88-0.99 is
    // about +-5 SE around the nominal level.
    const c = coverage(50, 300, 500);
    expect(c).toBeGreaterThanOrEqual(0.88);
    expect(c).toBeLessThanOrEqual(0.99);
  });

  it('covers the true mean reasonably at 10 pairs (BCa under-covers at small n)', () => {
    // Common knowledge: bootstrap intervals are too narrow at small n (they miss the
    // n/(n-1) variance factor and the skew is poorly estimated); expect ~0.85-0.9.
    const c = coverage(10, 300, 500);
    expect(c).toBeGreaterThanOrEqual(0.78);
    expect(c).toBeLessThanOrEqual(0.99);
  });

  it('matches scipy.stats.bootstrap(method="BCa") on the same data within Monte Carlo error', () => {
    const rng = createPrng(42);
    const xs = expSample(rng, 30).map((v) => 2 + 3 * v);
    const ours = bcaMean(xs, { resamples: 20000, seed: 11 })!;
    const ref: [number, number] = runPython(
      `
import sys, json, numpy as np
from scipy import stats
x = np.array(json.load(sys.stdin))
r = stats.bootstrap((x,), np.mean, n_resamples=20000, method='BCa', confidence_level=0.95,
                    random_state=np.random.default_rng(3))
print(json.dumps([float(r.confidence_interval.low), float(r.confidence_interval.high)]))
`,
      xs,
    );
    // Endpoint Monte Carlo error at 20000 resamples is a few tenths of a percent of the
    // width; allow 3 % of the width (common practice for cross-checking resampling code).
    const width = ref[1] - ref[0];
    expect(Math.abs(ours.lo - ref[0])).toBeLessThan(0.03 * width);
    expect(Math.abs(ours.hi - ref[1])).toBeLessThan(0.03 * width);
    expect(ours.units).toBe(30);
  });

  it('is deterministic for a seed and recomputes pooled ratios per resample', () => {
    // Two units with (num, den): pooled ratio is sum num / sum den (not a mean of ratios).
    const m = { units: 3, cols: 2, data: Float64Array.from([1, 1, 10, 2, 3, 1]) };
    const stat = (t: Float64Array) => t[0] / t[1];
    const a = bcaIntervals(m, [stat], { resamples: 500, seed: 9 })[0]!;
    const b = bcaIntervals(m, [stat], { resamples: 500, seed: 9 })[0]!;
    expect(a).toEqual(b);
    // Every resample's ratio lies between the smallest and largest unit ratio (1 and 5).
    expect(a.lo).toBeGreaterThanOrEqual(1);
    expect(a.hi).toBeLessThanOrEqual(5);
    expect(a.lo).toBeLessThan(a.hi);
    // Fewer than 2 units: no interval.
    expect(bcaMean([3])).toBeNull();
  });
});
