import { describe, expect, it } from 'vitest';
import { aggregate } from '../../src/stats/aggregate.js';
import { makeJob } from './fixtures.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';

const T = [1, 2];
const N = NaN;

// Three pairs, region `visible`:
//  A: errors [0.5, -1.5, 3, invalid]           (4 pixels, 3 valid)
//  B: visible region empty                      (0 pixels)
//  C: failed job -> all-invalid over 2 pixels   (README, "Regions and metrics": coverage 0, rates 100, errors empty)
function threePairs() {
  return [
    makeJob({ pair: 'a', time_ms: 10, errors: { all: [0.5, -1.5, 3, N] } }, T),
    makeJob({ pair: 'b', time_ms: 20, errors: { all: [1], visible: [] } }, T),
    makeJob({ pair: 'c', time_ms: null, failed: true, errors: { all: [N, N] } }, T),
  ];
}

describe('aggregate', () => {
  it('mean over pairs and pooled figures match a hand computation (empty region, failed job)', () => {
    const rows = aggregate(threePairs(), { thresholds: T, quantiles: DEFAULT_QUANTILES, ci: false });
    const vis = rows.find((r) => r.region === 'visible')!;
    // Hand computation (this test):
    //  n_pairs: A and C have a non-empty visible region -> 2; B is left out.
    expect(vis.n_pairs).toBe(2);
    expect(vis.n_jobs).toBe(3);
    expect(vis.n_failed).toBe(1);
    const m = vis.metrics;
    // coverage: A 75 %, C 0 % -> mean 37.5 (n 2); pooled 3 valid / 6 pixels = 50 %.
    expect(m.coverage!.mean).toBeCloseTo(37.5, 12);
    expect(m.coverage!.n).toBe(2);
    expect(m.coverage!.pooled).toBeCloseTo(50, 12);
    // epe: only A has valid predictions: (0.5+1.5+3)/3 = 5/3; pooled 5/3 too.
    expect(m.epe!.mean).toBeCloseTo(5 / 3, 12);
    expect(m.epe!.n).toBe(1);
    expect(m.epe!.pooled).toBeCloseTo(5 / 3, 12);
    // rmse: sqrt((0.25+2.25+9)/3); bias: (0.5-1.5+3)/3 = 2/3.
    expect(m.rmse!.pooled).toBeCloseTo(Math.sqrt(11.5 / 3), 12);
    expect(m.bias!.mean).toBeCloseTo(2 / 3, 12);
    // over1px: A has 1.5, 3 and the invalid pixel -> 3/4 = 75 %; C 100 %.
    //   mean (75+100)/2 = 87.5; pooled (3+2)/(4+2) = 83.33 %.
    expect(m['over1px'].mean).toBeCloseTo(87.5, 12);
    expect(m['over1px'].pooled).toBeCloseTo((100 * 5) / 6, 12);
    // over2px: A has 3 and the invalid -> 50 %; C 100 % -> mean 75; pooled 4/6.
    expect(m['over2px'].mean).toBeCloseTo(75, 12);
    expect(m['over2px'].pooled).toBeCloseTo((100 * 4) / 6, 12);
    // q50 of A's |e| = [0.5, 1.5, 3] is 1.5 (numpy linear); no pooled quantiles.
    expect(m.q50!.mean).toBeCloseTo(1.5, 12);
    expect(m.q50!.pooled).toBeNull();
    // time_ms is per job: A 10, B 20, C unknown -> 15 over 2 jobs.
    expect(m.time_ms!.mean).toBeCloseTo(15, 12);
    expect(m.time_ms!.n).toBe(2);
    // depth figures: no camera -> empty.
    expect(m.depth_relerr!.mean).toBeNull();
    expect(m.depth_relerr!.n).toBe(0);
  });

  it('known region includes B (non-empty) and so counts 3 pairs', () => {
    const rows = aggregate(threePairs(), { thresholds: T, quantiles: DEFAULT_QUANTILES, ci: false });
    const known = rows.find((r) => r.region === 'known')!;
    // Hand computation: coverage A 75, B 100, C 0 -> mean 175/3.
    expect(known.n_pairs).toBe(3);
    expect(known.metrics.coverage!.mean).toBeCloseTo(175 / 3, 12);
  });

  it('is independent of input order (sorted-pair sums), intervals included', () => {
    const jobs: ReturnType<typeof makeJob>[] = [];
    // Awkward values so float summation order would show (common practice for order tests).
    for (let i = 0; i < 40; i++) {
      const e = [0.1 * i + 1e-9 * i * i, -0.3 + 1 / (i + 3), 1e6 / (i + 1) - 999.7, i % 7 === 0 ? N : 0.7 * (i % 5)];
      jobs.push(makeJob({ pair: `p${String(i).padStart(2, '0')}`, matcher: i % 2 ? 'sgm' : 'block', time_ms: 3 + i, errors: { all: e } }, T));
    }
    const shuffled = [...jobs];
    // Deterministic shuffle (Fisher-Yates with a fixed LCG).
    let s = 12345;
    for (let i = shuffled.length - 1; i > 0; i--) {
      s = (s * 1103515245 + 12345) % 2147483648;
      const j = s % (i + 1);
      [shuffled[i], shuffled[j]] = [shuffled[j], shuffled[i]];
    }
    const a = aggregate(jobs, { thresholds: T, quantiles: DEFAULT_QUANTILES, ci: { resamples: 200, seed: 7 } });
    const b = aggregate(shuffled, { thresholds: T, quantiles: DEFAULT_QUANTILES, ci: { resamples: 200, seed: 7 } });
    expect(JSON.stringify(b)).toBe(JSON.stringify(a));
    expect(a.map((r) => r.matcher + r.region)).toEqual(
      ['block', 'sgm'].flatMap((m) => ['known', 'visible', 'occluded', 'flat', 'jump'].map((r) => m + r)),
    );
  });

  it('splits rows by tag and resamples groups when pairs have groups', () => {
    const jobs = [
      makeJob({ pair: 'a', group: 'g1', tags: ['rain'], errors: { all: [1, 2] } }, T),
      makeJob({ pair: 'b', group: 'g1', errors: { all: [3] } }, T),
      makeJob({ pair: 'c', group: 'g2', tags: ['rain'], errors: { all: [0.5] } }, T),
    ];
    const rows = aggregate(jobs, { thresholds: T, quantiles: DEFAULT_QUANTILES, byTag: true, ci: { resamples: 100 } });
    const all = rows.find((r) => r.region === 'known' && r.tag === null)!;
    expect(all.unit).toBe('group');
    expect(all.n_units).toBe(2);
    const rain = rows.find((r) => r.region === 'known' && r.tag === 'rain')!;
    // Hand computation: pairs a (epe 1.5) and c (0.5) -> mean 1.0.
    expect(rain.n_pairs).toBe(2);
    expect(rain.metrics.epe!.mean).toBeCloseTo(1, 12);
    // Without the option, tag rows appear because the jobs carry tags (common practice: opt-out default).
    expect(aggregate(jobs, { thresholds: T, quantiles: DEFAULT_QUANTILES, ci: false }).some((r) => r.tag === 'rain')).toBe(true);
    expect(aggregate(jobs, { thresholds: T, quantiles: DEFAULT_QUANTILES, ci: false, byTag: false }).some((r) => r.tag !== null)).toBe(false);
  });

  it('rejects results lacking a requested threshold (typed input error)', () => {
    expect(() => aggregate(threePairs(), { thresholds: [3], quantiles: DEFAULT_QUANTILES, ci: false })).toThrow(/no rate for threshold 3 px/);
  });
});
