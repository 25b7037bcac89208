/**
 * The smallest detectable change (src/stats/power.ts) against the textbook sample-size
 * formula for a paired mean under the normal approximation,
 *   n = (z(1 - alpha/2) + z(1 - beta))^2 * sigma^2 / delta^2
 * (Chow, Shao & Wang, "Sample Size Calculations in Clinical Research", 2nd ed. 2008,
 * section 3.1, one-sample / paired design; cited from memory), against scipy's normal
 * quantiles, and by simulation through the same interval and decision rule that compare uses.
 */
import { describe, expect, it } from 'vitest';
import { bcaMean } from '../../src/stats/bootstrap.js';
import { createPrng } from '../../src/stats/prng.js';
import { detectability, unitsNeeded, zSum } from '../../src/stats/power.js';
import { runPython } from './python.js';

/** Standard normal draws (Box-Muller, common practice) from the project's seeded stream. */
function normals(rng: ReturnType<typeof createPrng>, n: number, mean: number, sd: number): number[] {
  const out: number[] = [];
  while (out.length < n) {
    const u = 1 - rng.next();
    const v = rng.next();
    const r = Math.sqrt(-2 * Math.log(u));
    out.push(mean + sd * r * Math.cos(2 * Math.PI * v), mean + sd * r * Math.sin(2 * Math.PI * v));
  }
  return out.slice(0, n);
}

describe('smallest detectable change', () => {
  it('uses z(0.975) + z(0.8) as scipy.stats.norm.ppf gives them (simple-statistics probit, within 0.5 %)', () => {
    const z = runPython('import json, sys\nfrom scipy.stats import norm\nq = json.load(sys.stdin)\nprint(json.dumps(float(norm.ppf(q[0]) + norm.ppf(q[1]))))', [0.975, 0.8]);
    expect(z).toBeCloseTo(2.8016, 3); // 1.95996 + 0.84162, the familiar table values
    expect(Math.abs(zSum(0.05, 0.8) - z) / z).toBeLessThan(0.005);
  });

  it('follows the textbook formula: delta = (z + z) * s / sqrt(n), and n for an allowance inverts it', () => {
    // Worked example: sigma = delta gives n = 2.8016^2 = 7.85 -> 8 units (normal approximation).
    expect(unitsNeeded(1, 1)).toBe(8);
    // Eight units with s = 1.5 (percentage points): delta = 2.8016 * 1.5 / sqrt(8) = 1.486.
    const values = [-1.5, 1.5, -1.5, 1.5, -1.5, 1.5, -1.5, 1.5].map((v) => v * Math.sqrt(7 / 8)); // sample SD exactly 1.5
    const d = detectability(values)!;
    expect(d.n).toBe(8);
    expect(d.sd).toBeCloseTo(1.5, 12);
    expect(d.smallest).toBeCloseTo((zSum() * 1.5) / Math.sqrt(8), 12);
    expect(d.smallest).toBeCloseTo(1.486, 2);
    // Halving the allowance needs four times the units (the formula's 1 / delta^2).
    expect(unitsNeeded(1.5, 0.5)).toBe(Math.ceil((zSum() * 1.5 / 0.5) ** 2));
    expect(detectability([3])).toBeNull();
  });

  it('by simulation: changes well above it are called in >= 80 % of datasets, well below it about as often as the level allows', () => {
    // 16 units of paired differences with SD 1; the decision rule of compare: the 95 % BCa
    // interval of the mean difference excludes zero. 240 simulated datasets per case:
    // binomial SE at 0.8 is 0.026.
    const n = 16;
    const smallest = zSum() / Math.sqrt(n);
    const rate = (trueChange: number, seed: number): number => {
      const rng = createPrng(seed);
      let called = 0;
      const reps = 240;
      for (let r = 0; r < reps; r++) {
        const ci = bcaMean(normals(rng, n, trueChange, 1), { resamples: 1000, seed: r + 1 })!;
        if (ci.lo > 0 || ci.hi < 0) called++;
      }
      return called / reps;
    };
    expect(rate(1.5 * smallest, 7)).toBeGreaterThanOrEqual(0.8);
    // No change: the level's share (0.05); bootstrap intervals are somewhat narrow at n = 16.
    expect(rate(0, 8)).toBeLessThanOrEqual(0.12);
    // A fifth of it: the normal approximation gives power 1 - Phi(1.96 - 0.56) = 0.08.
    expect(rate(0.2 * smallest, 9)).toBeLessThanOrEqual(0.2);
  }, 60_000);
});
