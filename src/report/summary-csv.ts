/**
 * summary.csv: one row per configuration, dataset, region (and tag, when split).
 * Columns (our own layout):
 *   matcher, dataset, region, tag, n_pairs, n_failed, ci_unit, ci_units,
 *   then per metric X: mean_X, mean_X_lo, mean_X_hi, n_X,
 *   and, for metrics that pool: pooled_X, pooled_X_lo, pooled_X_hi.
 * Intervals are BCa bootstrap intervals (default 95 %) over `ci_unit`s (pair or group);
 * empty cells mean "no figure" (empty region, no valid prediction, not computed).
 */
import { csvText, type CsvCell } from './csv.js';
import type { SummaryRow } from '../stats/aggregate.js';
import { metricNames, pooledSpec } from '../stats/metrics.js';

export function summaryCsvHeader(thresholds: readonly number[]): string[] {
  const h = ['matcher', 'dataset', 'region', 'tag', 'n_pairs', 'n_failed', 'ci_unit', 'ci_units'];
  for (const m of metricNames(thresholds)) {
    h.push(`mean_${m}`, `mean_${m}_lo`, `mean_${m}_hi`, `n_${m}`);
    if (pooledSpec(m, thresholds)) h.push(`pooled_${m}`, `pooled_${m}_lo`, `pooled_${m}_hi`);
  }
  return h;
}

export function summaryCsvText(rows: SummaryRow[], thresholds: number[]): string {
  const header = summaryCsvHeader(thresholds);
  const names = metricNames(thresholds);
  const body: CsvCell[][] = rows.map((r) => {
    const cells: CsvCell[] = [r.matcher, r.dataset, r.region, r.tag, r.n_pairs, r.n_failed, r.unit, r.n_units];
    for (const m of names) {
      const s = r.metrics[m];
      cells.push(s?.mean ?? null, s?.meanCi?.lo ?? null, s?.meanCi?.hi ?? null, s?.n ?? 0);
      if (pooledSpec(m, thresholds)) cells.push(s?.pooled ?? null, s?.pooledCi?.lo ?? null, s?.pooledCi?.hi ?? null);
    }
    return cells;
  });
  return csvText(header, body);
}
