/**
 * pairs.csv: the tidy per-pair table, one row per configuration, pair, region and depth
 * band. Columns: matcher, condition, dataset, pair, region, band, status, pixels, then one column
 * per metric of the run's metric set in catalogue order (src/metrics/catalogue.ts). An
 * empty figure (null) is an empty cell. `band` is `all` for the whole region, else the
 * band's label (`2-4m`, `8m+`); `condition` is `clean` or the camera fault (`noise=4`).
 * Rows are sorted by matcher, condition (clean first, weak to strong), dataset, pair (code-unit
 * order), then region in the job's region order, the whole region before its bands
 * (nearest first). A pure function of the results.
 */
import { slicesOf } from '../core/regions.js';
import { compareConditions, conditionOf } from '../conditions/spec.js';
import type { JobResult } from '../core/score.js';
import { levelMapOf, metricsOf, metricValue, type MetricSet } from '../metrics/catalogue.js';
import { byCodeUnits, byNatural } from '../core/order.js';
import { csvText, type CsvCell } from './csv.js';

export function pairsCsvHeader(set: MetricSet): string[] {
  return ['matcher', 'condition', 'dataset', 'pair', 'region', 'band', 'status', 'pixels', ...metricsOf(set).map((m) => m.id)];
}

/** Round to 6 significant digits for the table (the journal keeps full precision). */
export function tableNumber(v: number | null | undefined): number | null {
  if (v === null || v === undefined || !Number.isFinite(v)) return null;
  return Number(v.toPrecision(6));
}

/** Rows of pairs.csv; `set` chooses the rate and quantile columns (a job lacking one has an empty cell). */
export function pairsCsvRows(results: readonly JobResult[], set: MetricSet): CsvCell[][] {
  const sorted = [...results].sort((a, b) => byNatural(a.matcher, b.matcher) || compareConditions(conditionOf(a), conditionOf(b)) || byCodeUnits(a.dataset, b.dataset) || byCodeUnits(a.pair, b.pair));
  const metrics = metricsOf(set);
  const rows: CsvCell[][] = [];
  for (const r of sorted) {
    const levels = levelMapOf(r, set);
    for (const sl of slicesOf(r)) {
      const sc = r.scores[sl.key];
      if (!sc) continue;
      const f = sc.figures;
      rows.push([r.matcher, conditionOf(r), r.dataset, r.pair, sl.region, sl.band, r.status, f.pixels, ...metrics.map((m) => tableNumber(metricValue(m, f, levels, r)))]);
    }
  }
  return rows;
}

export function pairsCsvText(results: readonly JobResult[], set: MetricSet): string {
  return csvText(pairsCsvHeader(set), pairsCsvRows(results, set));
}
