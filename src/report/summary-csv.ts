/**
 * summary.csv: one row per configuration, condition, dataset, region, depth band (and tag, when split).
 * Columns (our own layout):
 *   matcher, condition, dataset, region, band, tag, n_pairs, n_failed, ci_unit, ci_units,
 *   then per metric X of the catalogue (src/metrics/catalogue.ts): mean_X, mean_X_lo,
 *   mean_X_hi, n_X, and, for metrics that pool: pooled_X, pooled_X_lo, pooled_X_hi.
 *   Last: usable_m, usable_m_lo, usable_m_hi, usable_holds: the usable range of whole
 *   regions with depth (src/stats/usable-range.ts; usable_holds is to, beyond or nowhere).
 * Intervals are BCa bootstrap intervals (default 95 %) over `ci_unit`s (pair or group);
 * empty cells mean "no figure" (empty region, no valid prediction, not computed).
 */
import { csvText, type CsvCell } from './csv.js';
import type { SummaryRow } from '../stats/aggregate.js';
import { metricsOf, type MetricSet } from '../metrics/catalogue.js';

export function summaryCsvHeader(set: MetricSet): string[] {
  const h = ['matcher', 'condition', 'dataset', 'region', 'band', 'tag', 'n_pairs', 'n_failed', 'ci_unit', 'ci_units'];
  for (const m of metricsOf(set)) {
    h.push(`mean_${m.id}`, `mean_${m.id}_lo`, `mean_${m.id}_hi`, `n_${m.id}`);
    if (m.pool) h.push(`pooled_${m.id}`, `pooled_${m.id}_lo`, `pooled_${m.id}_hi`);
  }
  h.push('usable_m', 'usable_m_lo', 'usable_m_hi', 'usable_holds');
  return h;
}

export function summaryCsvText(rows: SummaryRow[], set: MetricSet): string {
  const metrics = metricsOf(set);
  const body: CsvCell[][] = rows.map((r) => {
    const cells: CsvCell[] = [r.matcher, r.condition, r.dataset, r.region, r.band, r.tag, r.n_pairs, r.n_failed, r.unit, r.n_units];
    for (const m of metrics) {
      const s = r.metrics[m.id];
      cells.push(s?.mean ?? null, s?.meanCi?.lo ?? null, s?.meanCi?.hi ?? null, s?.n ?? 0);
      if (m.pool) cells.push(s?.pooled ?? null, s?.pooledCi?.lo ?? null, s?.pooledCi?.hi ?? null);
    }
    const u = r.usable;
    cells.push(u?.range_m ?? null, u?.ci?.lo ?? null, u?.ci?.hi ?? null, u?.holds ?? null);
    return cells;
  });
  return csvText(summaryCsvHeader(set), body);
}
