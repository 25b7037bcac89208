import { describe, expect, it } from 'vitest';
import { signFlipTest } from '../../src/stats/permutation.js';
import { createPrng } from '../../src/stats/prng.js';
import { runPython } from './python.js';

describe('sign-flip permutation test', () => {
  it('equals the exact enumeration of all 32 sign patterns of a 5-pair example (by hand)', () => {
    const d = [1.0, -0.5, 2.0, 0.25, 1.5]; // observed sum 4.25
    // All 32 sign patterns, written out; '+' keeps d_i, '-' flips it.
    const patterns = [
      '+++++', '++++-', '+++-+', '+++--', '++-++', '++-+-', '++--+', '++---',
      '+-+++', '+-++-', '+-+-+', '+-+--', '+--++', '+--+-', '+---+', '+----',
      '-++++', '-+++-', '-++-+', '-++--', '-+-++', '-+-+-', '-+--+', '-+---',
      '--+++', '--++-', '--+-+', '--+--', '---++', '---+-', '----+', '-----',
    ];
    expect(new Set(patterns).size).toBe(32);
    const sums = patterns.map((p) => d.reduce((s, v, i) => s + (p[i] === '+' ? v : -v), 0));
    const extreme = patterns.filter((_, k) => Math.abs(sums[k]) >= 4.25 - 1e-12);
    // By hand: a pattern's sum is 4.25 - 2F, F = sum of the flipped d_i; |.| >= 4.25 iff
    // F <= 0 (flip nothing, {-0.5}, {-0.5, 0.25}) or F >= 4.25 ({1,2,1.5}, all but -0.5, all):
    // 6 patterns: +++++, +-+++, +-+-+ and their mirrors -----, -+---, -+-+-.
    expect(extreme.sort()).toEqual(['+++++', '+-+++', '+-+-+', '-+-+-', '-+---', '-----'].sort());
    const r = signFlipTest(d);
    expect(r.exact).toBe(true);
    expect(r.patterns).toBe(32);
    expect(r.p).toBe(6 / 32);
    expect(r.meanDiff).toBeCloseTo(4.25 / 5, 14);
  });

  it('agrees with scipy.stats.permutation_test (paired samples, exact) on the same numbers', () => {
    const rng = createPrng(99);
    const cases: { base: number[]; cand: number[] }[] = [];
    for (const n of [6, 9, 14]) {
      const base = Array.from({ length: n }, () => 5 + 3 * rng.next());
      const cand = base.map((b, i) => b + 0.4 * (rng.next() - 0.35) + (i % 3 === 0 ? 0.2 : 0));
      cases.push({ base, cand });
    }
    const py = `
import sys, json, numpy as np
from scipy import stats
out = []
for c in json.load(sys.stdin):
    x = np.array(c['cand']); y = np.array(c['base'])
    r = stats.permutation_test((x, y), lambda a, b, axis: np.mean(a - b, axis=axis),
        permutation_type='samples', alternative='two-sided', n_resamples=np.inf, vectorized=True)
    out.append(float(r.pvalue))
print(json.dumps(out))
`;
    const ref: number[] = runPython(py, cases);
    cases.forEach((c, k) => {
      const diffs = c.cand.map((v, i) => v - c.base[i]);
      const ours = signFlipTest(diffs);
      // scipy's two-sided p = 2 * min(one-sided); for a symmetric sign-flip null this equals
      // our #{|T*| >= |T|} / 2^n.
      expect(ours.p).toBeCloseTo(ref[k], 12);
    });
  });

  it('Monte Carlo p (forced) is close to the exact p', () => {
    const rng = createPrng(5);
    const d = Array.from({ length: 16 }, () => rng.next() - 0.4);
    const exact = signFlipTest(d);
    const mc = signFlipTest(d, { exactMaxUnits: 0, permutations: 20000, seed: 3 });
    expect(mc.exact).toBe(false);
    // Binomial standard error at 20000 draws is below 0.0036: allow 4 SE (common practice).
    expect(Math.abs(mc.p - exact.p)).toBeLessThan(0.015);
    expect(mc.p).toBeGreaterThan(0);
  });

  it('no difference at all gives p = 1', () => {
    // Every pattern sums to 0, so every pattern is as extreme as the observed 0 (definition).
    expect(signFlipTest([0, 0, 0]).p).toBe(1);
  });
});
