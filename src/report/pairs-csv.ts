/**
 * pairs.csv: the tidy per-pair table, one row per configuration, pair and region.
 * Columns, in this order:
 *   matcher,dataset,pair,region,status,pixels,coverage,epe,rmse,bias,<over<t>px per threshold>,
 *   q50,q75,q90,q99,depth_relerr,depth_rmse_m,time_ms,peak_mb
 * An empty figure (null) is an empty cell. Rows are sorted by matcher, dataset, pair
 * (code-unit order), then region in REGION_IDS order. A pure function of the results.
 */
import { REGION_IDS } from '../core/regions.js';
import type { JobResult } from '../core/score.js';
import { thresholdName } from '../metrics/types.js';
import { csvText, type CsvCell } from './csv.js';

export function pairsCsvHeader(thresholds: readonly number[]): string[] {
  return [
    'matcher',
    'dataset',
    'pair',
    'region',
    'status',
    'pixels',
    'coverage',
    'epe',
    'rmse',
    'bias',
    ...thresholds.map(thresholdName),
    'q50',
    'q75',
    'q90',
    'q99',
    'depth_relerr',
    'depth_rmse_m',
    'time_ms',
    'peak_mb',
  ];
}

/** Round to 6 significant digits for the table (the journal keeps full precision). */
export function tableNumber(v: number | null | undefined): number | null {
  if (v === null || v === undefined || !Number.isFinite(v)) return null;
  return Number(v.toPrecision(6));
}

function cmp(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/** Rows of pairs.csv; `thresholds` chooses the rate columns (each result must have them). */
export function pairsCsvRows(results: readonly JobResult[], thresholds: readonly number[]): CsvCell[][] {
  const sorted = [...results].sort((a, b) => cmp(a.matcher, b.matcher) || cmp(a.dataset, b.dataset) || cmp(a.pair, b.pair));
  const rows: CsvCell[][] = [];
  for (const r of sorted) {
    const idx = thresholds.map((t) => r.thresholds.indexOf(t));
    for (const region of REGION_IDS) {
      const f = r.scores[region].figures;
      rows.push([
        r.matcher,
        r.dataset,
        r.pair,
        region,
        r.status,
        f.pixels,
        tableNumber(f.coverage),
        tableNumber(f.epe),
        tableNumber(f.rmse),
        tableNumber(f.bias),
        ...idx.map((i) => (i < 0 ? null : tableNumber(f.rates[i]))),
        tableNumber(f.q50),
        tableNumber(f.q75),
        tableNumber(f.q90),
        tableNumber(f.q99),
        tableNumber(f.depth_relerr),
        tableNumber(f.depth_rmse_m),
        tableNumber(r.time_ms),
        tableNumber(r.peak_mb),
      ]);
    }
  }
  return rows;
}

export function pairsCsvText(results: readonly JobResult[], thresholds: readonly number[]): string {
  return csvText(pairsCsvHeader(thresholds), pairsCsvRows(results, thresholds));
}
