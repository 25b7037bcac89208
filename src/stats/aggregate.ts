/**
 * Aggregation of per-pair results into one summary row per
 * (configuration, dataset, region, depth band[, tag]): one row per slice (src/core/regions.ts).
 *
 * - mean: the mean over pairs of each per-pair figure. A pair whose figure is empty
 *   (null: empty region, or no valid prediction for error figures) is left out, and
 *   `n` says how many pairs each mean uses. `n_pairs` counts pairs whose region is
 *   non-empty. Cost figures (time_ms, peak_mb) are per job, the same in every region;
 *   their means leave out jobs served from the cache and jobs that failed (measuredCost).
 * - pooled: the figure of all pairs' pixels at once, from the raw sums
 *   (coverage = valid/pixels, epe = sum|e|/valid, rmse = sqrt(sum e^2/valid),
 *   bias = sum e/valid, rates = bad/pixels, depth figures likewise);
 *   no pooled quantiles or cost figures (null).
 * - A failed job is all-invalid (its sums already say so): coverage 0, rates 100,
 *   error figures empty.
 * - Jobs are sorted by (dataset, pair) with plain code-unit comparison before any
 *   sum, so parallel, resumed and sharded runs give identical numbers.
 * - Confidence intervals (BCa bootstrap, see bootstrap.ts) resample pairs, or the
 *   manifest's groups when any pair of the cell has a `group`.
 * - Whole regions whose pairs carry depth profiles also get their usable range
 *   (usable-range.ts), by the metric set's rule.
 */
import { compareConditions, conditionOf, configLabel } from '../conditions/spec.js';
import type { JobResult } from '../core/score.js';
import { ALL_BANDS, sliceKey, slicesOf, type Slice } from '../core/regions.js';
import { InputError } from '../core/errors.js';
import { detectability } from './power.js';
import { bcaIntervals, type BootstrapOptions, type Interval, type UnitMatrix, type TotalsStat } from './bootstrap.js';
import { levelMapOf, measuredCost, metricsOf, metricValue, pooledFrom, readSums, sumColumnCount, type LevelMap, type MetricSet } from '../metrics/catalogue.js';
import { byCodeUnits, byNatural, groupBy } from '../core/order.js';
import { DEFAULT_USABLE_RULE, parseUsableRule, usableRangeOf, type UsableRange } from './usable-range.js';

export interface MetricSummary {
  /** Mean over pairs with a non-empty figure; null when no pair has one. */
  mean: number | null;
  /** Pairs the mean uses. */
  n: number;
  /** Pooled figure from the sums; null for quantiles and cost figures or an empty pool. */
  pooled: number | null;
  /** BCa interval of the mean (null when not computed or undefined). */
  meanCi: Interval | null;
  /** BCa interval of the pooled figure. */
  pooledCi: Interval | null;
  /**
   * The smallest change of the mean these units can tell from noise (stats/power.ts, from
   * the spread of the per-unit figures over pairs or groups); null with fewer than two.
   */
  detect: number | null;
}

export interface SummaryRow {
  matcher: string;
  /** Camera-fault condition (`clean`, `noise=4`; src/conditions/spec.ts). */
  condition: string;
  matcherId: string;
  dataset: string;
  region: string;
  /** `all` for the whole region, else the depth band's label (`2-4m`). */
  band: string;
  /** null = all pairs; otherwise only pairs carrying this manifest tag. */
  tag: string | null;
  /** Pairs whose region is non-empty. */
  n_pairs: number;
  /** Jobs in the cell (pairs scored, empty region or not). */
  n_jobs: number;
  n_failed: number;
  /** What the intervals resample, and how many of them there are. */
  unit: 'pair' | 'group';
  n_units: number;
  /** Keyed by metric id (see src/metrics/catalogue.ts). */
  metrics: Record<string, MetricSummary>;
  /** Whole regions with depth profiles: the usable range (usable-range.ts). */
  usable?: UsableRange;
}

export interface AggregateOptions extends MetricSet {
  /** Bootstrap settings; false = no intervals. Default: intervals with the defaults of bootstrap.ts. */
  ci?: BootstrapOptions | false;
  /** Also emit rows split by the manifest's pair tags (default: when any job carries tags). */
  byTag?: boolean;
}

/** Plain code-unit comparison (locale independent): src/core/order.ts. */
export const cmp = byCodeUnits;

/** Sort jobs by (configuration label in natural order, dataset, pair); pure. */
export function sortJobs(results: readonly JobResult[]): JobResult[] {
  return [...results].sort((x, y) => byNatural(x.matcher, y.matcher) || compareConditions(conditionOf(x), conditionOf(y)) || cmp(x.dataset, y.dataset) || cmp(x.pair, y.pair));
}

/** Where the set's levels sit in the job's own figures; an InputError when the job lacks one. */
export function jobLevels(job: JobResult, set: MetricSet): LevelMap {
  const map = levelMapOf(job, set);
  const t = map.rate.indexOf(-1);
  if (t >= 0) {
    throw new InputError(undefined, `results of ${job.matcher} on ${job.dataset}/${job.pair} have no rate for threshold ${set.thresholds[t]} px (they have ${job.thresholds.join(', ')})`);
  }
  const q = map.quantile.indexOf(-1);
  if (q >= 0) {
    throw new InputError(undefined, `results of ${job.matcher} on ${job.dataset}/${job.pair} have no ${set.quantiles[q]} % quantile (they have ${job.quantiles.join(', ')})`);
  }
  return map;
}

/**
 * Per-unit matrix of one region for a list of jobs already in sorted order:
 * columns = [value sum, count] per metric, then the raw sum columns.
 * Units are groups (first appearance in sorted order) when `byGroup`, else pairs.
 */
export interface CellMatrix extends UnitMatrix {
  metrics: string[];
  /** Column offset of the raw sums. */
  sumBase: number;
  unitKeys: string[];
}

export function cellMatrix(jobs: readonly JobResult[], key: string, set: MetricSet, byGroup: boolean): CellMatrix {
  const metrics = metricsOf(set);
  const M = metrics.length;
  const sumCols = sumColumnCount(set);
  const cols = 2 * M + sumCols;
  const unitIndex = new Map<string, number>();
  const unitKeys: string[] = [];
  for (const j of jobs) {
    const key = byGroup && j.group !== undefined ? `group:${j.group}` : `pair:${j.dataset}/${j.pair}`;
    if (!unitIndex.has(key)) {
      unitIndex.set(key, unitKeys.length);
      unitKeys.push(key);
    }
  }
  const data = new Float64Array(unitKeys.length * cols);
  const sums = new Float64Array(sumCols);
  for (const j of jobs) {
    const levels = jobLevels(j, set);
    const u = unitIndex.get(byGroup && j.group !== undefined ? `group:${j.group}` : `pair:${j.dataset}/${j.pair}`)!;
    const base = u * cols;
    const score = j.scores[key];
    if (!score) continue; // a pair without this slice (no camera: no bands) adds nothing
    const nonEmpty = score.sums.pixels > 0;
    const cost = measuredCost(j);
    for (let m = 0; m < M; m++) {
      const metric = metrics[m];
      if (!metric.perJob && !nonEmpty) continue;
      const v = metricValue(metric, score.figures, levels, cost);
      if (v === null || !Number.isFinite(v)) continue;
      data[base + 2 * m] += v;
      data[base + 2 * m + 1] += 1;
    }
    readSums(score.sums, levels, sums);
    for (let c = 0; c < sumCols; c++) data[base + 2 * M + c] += sums[c];
  }
  return { units: unitKeys.length, cols, data, metrics: metrics.map((x) => x.id), sumBase: 2 * M, unitKeys };
}

/** Statistics of a cell: [mean of metric 0, pooled of metric 0, mean of metric 1, ...]. */
export function cellStats(cm: CellMatrix, set: MetricSet): TotalsStat[] {
  const out: TotalsStat[] = [];
  metricsOf(set).forEach((metric, m) => {
    out.push((t) => (t[2 * m + 1] > 0 ? t[2 * m] / t[2 * m + 1] : NaN));
    const pool = metric.pool;
    if (pool === null) out.push(() => NaN);
    else out.push((t) => pooledFrom(pool, t, cm.sumBase) ?? NaN);
  });
  return out;
}

function summarizeCell(
  jobs: readonly JobResult[],
  slice: Slice,
  tag: string | null,
  opts: AggregateOptions,
): SummaryRow {
  const byGroup = jobs.some((j) => j.group !== undefined);
  const cm = cellMatrix(jobs, slice.key, opts, byGroup);
  const stats = cellStats(cm, opts);
  // Point figures from the totals, summed in sorted unit order.
  const tot = new Float64Array(cm.cols);
  for (let u = 0; u < cm.units; u++) for (let c = 0; c < cm.cols; c++) tot[c] += cm.data[u * cm.cols + c];
  const cis = opts.ci === false ? stats.map(() => null) : bcaIntervals(cm, stats, opts.ci ?? {});
  const metrics: Record<string, MetricSummary> = {};
  cm.metrics.forEach((name, m) => {
    const mean = stats[2 * m](tot);
    const pooled = stats[2 * m + 1](tot);
    const unitMeans: number[] = [];
    for (let u = 0; u < cm.units; u++) {
      const count = cm.data[u * cm.cols + 2 * m + 1];
      if (count > 0) unitMeans.push(cm.data[u * cm.cols + 2 * m] / count);
    }
    metrics[name] = {
      mean: Number.isFinite(mean) ? mean : null,
      n: tot[2 * m + 1],
      pooled: Number.isFinite(pooled) ? pooled : null,
      meanCi: cis[2 * m] ?? null,
      pooledCi: cis[2 * m + 1] ?? null,
      detect: detectability(unitMeans)?.smallest ?? null,
    };
  });
  let nPairs = 0;
  let nFailed = 0;
  for (const j of jobs) {
    if ((j.scores[slice.key]?.sums.pixels ?? 0) > 0) nPairs++;
    if (j.status === 'failed') nFailed++;
  }
  const usable = slice.band === ALL_BANDS ? usableRangeOf(jobs, slice.key, opts.usableRange !== undefined ? parseUsableRule(opts.usableRange, 'usableRange') : DEFAULT_USABLE_RULE, { byGroup, ci: opts.ci ?? {} }) : null;
  return {
    matcher: jobs[0].matcher,
    condition: conditionOf(jobs[0]),
    matcherId: jobs[0].matcherId,
    dataset: jobs[0].dataset,
    region: slice.region,
    band: slice.band,
    tag,
    n_pairs: nPairs,
    n_jobs: jobs.length,
    n_failed: nFailed,
    unit: byGroup ? 'group' : 'pair',
    n_units: cm.units,
    metrics,
    ...(usable ? { usable } : {}),
  };
}

/**
 * Keep one job per (matcher, dataset, pair): a later line of the journal replaces an
 * earlier one (a re-run after a resume).
 */
export function latestJobs(results: readonly JobResult[]): JobResult[] {
  const byKey = new Map<string, JobResult>();
  for (const r of results) byKey.set(`${configLabel(r)}\u0000${r.dataset}\u0000${r.pair}`, r);
  return [...byKey.values()];
}

/** The slices of a list of jobs: each job's own (slicesOf), in first-seen order. */
export function jobSlices(jobs: readonly JobResult[]): Slice[] {
  const seen = new Map<string, Slice>();
  for (const j of jobs) for (const sl of slicesOf(j)) if (!seen.has(sl.key)) seen.set(sl.key, sl);
  return [...seen.values()];
}

/** The whole-region slice of a region. */
export function wholeRegion(region: string): Slice {
  return { key: sliceKey(region, ALL_BANDS), region, band: ALL_BANDS };
}

/**
 * One row per (matcher label, dataset, slice), rows sorted by matcher, dataset, then
 * region in the jobs' region order, the whole region before its bands; with `byTag`,
 * rows per tag follow each untagged row set.
 */
export function aggregate(results: JobResult[], opts: AggregateOptions): SummaryRow[] {
  const jobs = sortJobs(latestJobs(results));
  const cells = groupBy(jobs, (j) => `${configLabel(j)}\u0000${j.dataset}`);
  const rows: SummaryRow[] = [];
  for (const list of cells.values()) {
    const slices = jobSlices(list);
    for (const sl of slices) rows.push(summarizeCell(list, sl, null, opts));
    if (opts.byTag ?? jobs.some((j) => j.tags !== undefined && j.tags.length > 0)) {
      const tags = [...new Set(list.flatMap((j) => j.tags ?? []))].sort(cmp);
      for (const tag of tags) {
        const sub = list.filter((j) => (j.tags ?? []).includes(tag));
        for (const sl of slices) rows.push(summarizeCell(sub, sl, tag, opts));
      }
    }
  }
  return rows;
}
