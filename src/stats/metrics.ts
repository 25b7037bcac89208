/**
 * The metric catalogue as the statistics and reports see it: names (in column
 * order), how to read a metric from one pair's figures, how to pool it from raw
 * sums, and which direction is worse.
 *
 * Every pooled figure is a ratio of two column sums (optionally scaled and
 * square-rooted), so a bootstrap resample only has to re-weight per-pair sums.
 */
import type { RegionFigures, RegionSums } from '../core/score.js';
import { thresholdName, QUANTILE_NAMES } from '../metrics/types.js';

/** Metric ids in column order for a threshold set. */
export function metricNames(thresholds: readonly number[]): string[] {
  return [
    'coverage',
    'epe',
    'rmse',
    'bias',
    ...thresholds.map(thresholdName),
    ...QUANTILE_NAMES,
    'depth_relerr',
    'depth_rmse_m',
    'time_ms',
    'peak_mb',
  ];
}

/** Per-region figures only (no cost metrics): these exist per region. */
export const COST_METRICS = ['time_ms', 'peak_mb'] as const;

/**
 * Which direction is worse. `bias` is judged by its magnitude: a larger |bias| is worse,
 * whatever its sign (a systematic offset in either direction shifts depth).
 */
export type Direction = 'lower-better' | 'higher-better' | 'abs-lower-better';

export function metricDirection(metric: string): Direction {
  if (metric === 'coverage') return 'higher-better';
  if (metric === 'bias') return 'abs-lower-better';
  return 'lower-better';
}

/** Unit shown beside a metric. */
export function metricUnit(metric: string): string {
  if (metric === 'coverage' || metric.startsWith('over')) return '%';
  if (metric === 'depth_relerr') return '';
  if (metric === 'depth_rmse_m') return 'm';
  if (metric === 'time_ms') return 'ms';
  if (metric === 'peak_mb') return 'MB';
  return 'px';
}

/** Is this metric id known for this threshold set? */
export function isKnownMetric(metric: string, thresholds: readonly number[]): boolean {
  return metricNames(thresholds).includes(metric);
}

/**
 * Index of the rate for a metric name (`over2px` -> index of 2 in thresholds), or -1.
 */
export function rateIndex(metric: string, thresholds: readonly number[]): number {
  for (let i = 0; i < thresholds.length; i++) if (thresholdName(thresholds[i]!) === metric) return i;
  return -1;
}

/**
 * Read one metric from one pair's figures. `rateMap[k]` is the index in the job's own
 * rates array of threshold k of the aggregate's threshold set.
 * Returns null for an empty figure.
 */
export function figureOf(
  fig: RegionFigures,
  metric: string,
  thresholds: readonly number[],
  rateMap: readonly number[],
  cost: { time_ms: number | null; peak_mb: number | null },
): number | null {
  switch (metric) {
    case 'coverage':
      return fig.coverage;
    case 'epe':
      return fig.epe;
    case 'rmse':
      return fig.rmse;
    case 'bias':
      return fig.bias;
    case 'q50':
      return fig.q50;
    case 'q75':
      return fig.q75;
    case 'q90':
      return fig.q90;
    case 'q99':
      return fig.q99;
    case 'depth_relerr':
      return fig.depth_relerr;
    case 'depth_rmse_m':
      return fig.depth_rmse_m;
    case 'time_ms':
      return cost.time_ms;
    case 'peak_mb':
      return cost.peak_mb;
    default: {
      const k = rateIndex(metric, thresholds);
      if (k < 0) return null;
      const v = fig.rates[rateMap[k]!];
      return v === undefined ? null : v;
    }
  }
}

/**
 * Columns of raw sums kept per pair for pooling. `bad{k}` for each threshold k.
 */
export function sumColumns(thresholds: readonly number[]): string[] {
  return [
    'pixels',
    'valid',
    'sumAbs',
    'sumSq',
    'sumErr',
    ...thresholds.map((_, k) => `bad${k}`),
    'depthCount',
    'depthSumRel',
    'depthSumSq',
  ];
}

/** Fill `out` (length sumColumns(thresholds).length) from one pair's sums. */
export function readSums(s: RegionSums, rateMap: readonly number[], out: Float64Array): void {
  out[0] = s.pixels;
  out[1] = s.valid;
  out[2] = s.sumAbs;
  out[3] = s.sumSq;
  out[4] = s.sumErr;
  const k = rateMap.length;
  for (let i = 0; i < k; i++) out[5 + i] = s.bad[rateMap[i]!] ?? 0;
  out[5 + k] = s.depthCount;
  out[6 + k] = s.depthSumRel;
  out[7 + k] = s.depthSumSq;
}

/** How a pooled figure is made: scale * num/den, square-rooted when `sqrt`. */
export interface PooledSpec {
  num: number;
  den: number;
  scale: number;
  sqrt: boolean;
}

/** Pooled recipe for a metric, or null when the metric has no pooled figure (quantiles, cost). */
export function pooledSpec(metric: string, thresholds: readonly number[]): PooledSpec | null {
  const k = thresholds.length;
  switch (metric) {
    case 'coverage':
      return { num: 1, den: 0, scale: 100, sqrt: false };
    case 'epe':
      return { num: 2, den: 1, scale: 1, sqrt: false };
    case 'rmse':
      return { num: 3, den: 1, scale: 1, sqrt: true };
    case 'bias':
      return { num: 4, den: 1, scale: 1, sqrt: false };
    case 'depth_relerr':
      return { num: 6 + k, den: 5 + k, scale: 1, sqrt: false };
    case 'depth_rmse_m':
      return { num: 7 + k, den: 5 + k, scale: 1, sqrt: true };
    default: {
      const i = rateIndex(metric, thresholds);
      if (i < 0) return null;
      return { num: 5 + i, den: 0, scale: 100, sqrt: false };
    }
  }
}

/** Apply a pooled recipe to summed columns; null when the denominator is 0. */
export function pooledFrom(spec: PooledSpec, num: number, den: number): number | null {
  if (!(den > 0)) return null;
  const r = (spec.scale * num) / den;
  return spec.sqrt ? Math.sqrt(r) : r;
}
