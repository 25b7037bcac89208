import { describe, expect, it } from 'vitest';
import { aggregate } from '../../src/stats/aggregate.js';
import { summaryCsvText } from '../../src/report/summary-csv.js';
import { makeJob } from '../stats/fixtures.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';
import { parseCsv } from '../support/cli.js';

const T = [1, 2];

describe('summaryCsvText', () => {
  it('writes means, pooled figures and empty cells for empty figures', () => {
    const jobs = [
      makeJob({ pair: 'a', errors: { all: [0.5, -1.5, 3, NaN] } }, T),
      makeJob({ pair: 'b', errors: { all: [1], visible: [] } }, T),
    ];
    const rows = aggregate(jobs, { thresholds: T, quantiles: DEFAULT_QUANTILES, ci: false });
    const csv = parseCsv(summaryCsvText(rows, { thresholds: T, quantiles: DEFAULT_QUANTILES }));
    const h = csv[0];
    expect(h.slice(0, 6)).toEqual(['matcher', 'condition', 'dataset', 'region', 'band', 'tag']);
    expect(csv.slice(1).every((r) => r[4] === 'all')).toBe(true); // no depth bands without a camera
    expect(h).toContain('mean_over2px');
    expect(h).toContain('pooled_over2px');
    expect(h).not.toContain('pooled_q50'); // no pooled quantiles (README metric table)
    const vis = csv.find((r) => r[3] === 'visible')!;
    const col = (name: string) => vis[h.indexOf(name)];
    // Hand computation: only pair a has visible pixels; over2px = 2 of 4 -> 50 %.
    expect(col('n_pairs')).toBe('1');
    expect(Number(col('mean_over2px'))).toBe(50);
    expect(Number(col('pooled_coverage'))).toBe(75);
    // Intervals not computed -> empty cells; no depth figures -> empty cell.
    expect(col('mean_epe_lo')).toBe('');
    expect(col('mean_depth_relerr')).toBe('');
    expect(csv.length).toBe(1 + 5);
  });

  it('neutralises a label that a spreadsheet would run as a formula (OWASP CSV injection)', () => {
    const jobs = [makeJob({ pair: 'a', matcher: '=HYPERLINK("x")', errors: { all: [1] } }, T), makeJob({ pair: 'a', matcher: '\tsgm', errors: { all: [1] } }, T)];
    const csv = parseCsv(summaryCsvText(aggregate(jobs, { thresholds: T, quantiles: DEFAULT_QUANTILES, ci: false }), { thresholds: T, quantiles: DEFAULT_QUANTILES }));
    const labels = new Set(csv.slice(1).map((r) => r[0]));
    expect(labels).toEqual(new Set([`'=HYPERLINK("x")`, `'\tsgm`]));
  });
});
