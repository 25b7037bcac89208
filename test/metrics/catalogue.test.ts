/**
 * The metric catalogue: what it resolves to for a metric set, and the README's metric
 * table, which must be the one the catalogue generates (so the documentation cannot
 * drift from the code).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { catalogueMarkdown, entryOf, findMetric, metricsOf, pooledFrom, readSums, sumColumnCount, levelMapOf } from '../../src/metrics/catalogue.js';
import { scorePair } from '../../src/metrics/score.js';
import { REGION_BIT, plainRegionMap } from '../../src/core/regions.js';

describe('metric catalogue', () => {
  it('resolves one column per threshold and per quantile level, in catalogue order', () => {
    const ids = metricsOf({ thresholds: [0.5, 2], quantiles: [50, 99.5] }).map((m) => m.id);
    expect(ids).toEqual(['coverage', 'epe', 'rmse', 'bias', 'over0.5px', 'over2px', 'q50', 'q99.5', 'depth_relerr', 'depth_rmse_m', 'depth_relmed', 'depth_over1pct', 'depth_over2pct', 'depth_over5pct', 'conf_auc', 'conf_oracle_auc', 'conf_gap', 'conf_clean_share', 'subpix_lock', 'flicker', 'time_ms', 'peak_mb']);
    expect(entryOf('over0.7px')?.id).toBe('over{}px');
    expect(entryOf('q68')?.id).toBe('q{}');
    expect(entryOf('qx')).toBeUndefined();
    expect(findMetric({ thresholds: [1], quantiles: [] }, 'over2px')).toBeUndefined();
  });

  it('pools by the sums it names: pooled figures equal the figure of the concatenated pixels', () => {
    // Two one-row "pairs"; the concatenation is scored as one pair. Pooled epe, rmse,
    // bias, coverage and rates are ratios of sums (README, metric table), so they must
    // equal the figures of the concatenated pixels exactly up to rounding.
    const set = { thresholds: [1], quantiles: [50] };
    const K = REGION_BIT.known;
    const map = (n: number) => plainRegionMap(n, 1, new Uint8Array(n).fill(K));
    const a = scorePair(Float32Array.of(1, 3, NaN), new Float32Array(3), map(3), set);
    const b = scorePair(Float32Array.of(-0.5, 2), new Float32Array(2), map(2), set);
    const all = scorePair(Float32Array.of(1, 3, NaN, -0.5, 2), new Float32Array(5), map(5), set);
    const tot = new Float64Array(sumColumnCount(set));
    const one = new Float64Array(sumColumnCount(set));
    for (const s of [a, b]) {
      readSums(s.known.sums, levelMapOf(set, set), one);
      for (let i = 0; i < tot.length; i++) tot[i] += one[i];
    }
    for (const m of metricsOf(set)) {
      if (!m.pool) continue;
      const f = all.known.figures;
      const want = m.id === 'over1px' ? f.rates[0] : (f as unknown as Record<string, number | null>)[m.id];
      expect(pooledFrom(m.pool, tot), m.id).toBeCloseTo(want as number, 12);
    }
  });

  it("the README's metric table is the one the catalogue generates", () => {
    const readme = readFileSync('README.md', 'utf8');
    const start = '<!-- metric table: generated from src/metrics/catalogue.ts by `npm run docs:metrics` -->\n';
    const a = readme.indexOf(start);
    const b = readme.indexOf('<!-- end of metric table -->');
    expect(a).toBeGreaterThan(0);
    expect(readme.slice(a + start.length, b)).toBe(catalogueMarkdown());
  });
});
