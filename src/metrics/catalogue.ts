/**
 * The metric catalogue: the one table that says what every metric is. Every other
 * place (pairs.csv and summary.csv columns, aggregation and pooling, compare's
 * directions and gate validation, the report's headers and units, the README's
 * metric table) derives from it through `resolveMetrics`.
 *
 * Two entries are families with one member per configured level: the bad-pixel rates
 * (one per threshold in px, `over2px`) and the error quantiles (one per level in %,
 * `q68`). A run's `MetricSet` says which levels it has.
 *
 * Pooling names the sums it uses (fields of RegionSums); a pooled figure is
 * `scale * num / den`, square-rooted when `sqrt`, so a bootstrap resample only
 * re-weights per-pair sums. `bad` is the family's own count (bad[k] for threshold k).
 *
 * Adding a metric: one entry here, its computation in src/metrics/ (the scorer fills
 * RegionSums and RegionFigures), and one test against an outside reference.
 */
import type { RegionFigures, RegionSums } from '../core/score.js';

/** Sums a pooled figure may name: the scalar fields of RegionSums, or `bad` (the rate family's count). */
export type SumName = (typeof SCALAR_SUMS)[number] | 'bad';

/** The scalar sums, in the order of the sum columns (the rate counts follow them). */
export const SCALAR_SUMS = ['pixels', 'valid', 'sumAbs', 'sumSq', 'sumErr', 'depthCount', 'depthSumRel', 'depthSumSq', 'depthPixels', 'depthBad1', 'depthBad2', 'depthBad5'] as const;

export type Better = 'lower' | 'higher' | 'abs-lower';

/** Scalar fields of RegionFigures that a metric reads. */
type ScalarFigure = 'coverage' | 'epe' | 'rmse' | 'bias' | 'depth_relerr' | 'depth_rmse_m' | 'depth_relmed' | 'depth_over1pct' | 'depth_over2pct' | 'depth_over5pct' | 'conf_auc' | 'conf_oracle_auc' | 'conf_gap' | 'conf_clean_share' | 'subpix_lock' | 'flicker';

interface EntryBase {
  /** Id in files, CSV and the CLI; a family's id has `{}` where the level goes. */
  readonly id: string;
  /** '%', 'px', 'm', 'ms', 'MiB', or 'fraction' (a share written as 0.05 for 5 %). */
  readonly unit: '%' | 'px' | 'm' | 'ms' | 'MiB' | 'fraction';
  readonly better: Better;
  /** Words for the report's headers; the unit is added once by `heading`. */
  readonly label: string;
  readonly description: string;
  readonly pool: { readonly num: SumName; readonly den: SumName; readonly scale: number; readonly sqrt: boolean } | null;
}

export type CatalogueEntry =
  | (EntryBase & { readonly read: { readonly region: ScalarFigure } })
  | (EntryBase & { readonly read: { readonly family: 'rate' | 'quantile' } })
  | (EntryBase & { readonly read: { readonly job: 'time_ms' | 'peak_mb' } });

// Kept alike on purpose: every entry has the same fields because the table is the data that
// pairs.csv, summary.csv, compare, the gates, the report and the README read; one row per metric.
export const METRIC_CATALOGUE = [
  {
    id: 'coverage',
    unit: '%',
    better: 'higher',
    label: 'Coverage',
    description: "share of the region's pixels with a valid (finite) prediction",
    read: { region: 'coverage' },
    pool: { num: 'valid', den: 'pixels', scale: 100, sqrt: false },
  },
  {
    id: 'epe',
    unit: 'px',
    better: 'lower',
    label: 'End-point error',
    description: 'mean absolute disparity error over valid predictions',
    read: { region: 'epe' },
    pool: { num: 'sumAbs', den: 'valid', scale: 1, sqrt: false },
  },
  {
    id: 'rmse',
    unit: 'px',
    better: 'lower',
    label: 'RMS error',
    description: 'root mean square disparity error over valid predictions',
    read: { region: 'rmse' },
    pool: { num: 'sumSq', den: 'valid', scale: 1, sqrt: true },
  },
  {
    id: 'bias',
    unit: 'px',
    better: 'abs-lower',
    label: 'Bias',
    description: 'mean signed error (prediction - truth) over valid predictions; a larger |bias| is worse',
    read: { region: 'bias' },
    pool: { num: 'sumErr', den: 'valid', scale: 1, sqrt: false },
  },
  {
    id: 'over{}px',
    unit: '%',
    better: 'lower',
    label: 'Bad pixels over {} px',
    description: "share of the region's pixels whose absolute error is strictly above the threshold (float64), or with no valid prediction",
    read: { family: 'rate' },
    pool: { num: 'bad', den: 'pixels', scale: 100, sqrt: false },
  },
  {
    id: 'q{}',
    unit: 'px',
    better: 'lower',
    label: '{} % quantile of |error|',
    description: 'quantile of the absolute error over valid predictions, linear interpolation between order statistics (numpy default); not pooled',
    read: { family: 'quantile' },
    pool: null,
  },
  {
    id: 'depth_relerr',
    unit: 'fraction',
    better: 'lower',
    label: 'Mean relative depth error',
    description: 'mean of |Z_pred - Z_true| / Z_true over pixels with a positive true and predicted depth (camera needed)',
    read: { region: 'depth_relerr' },
    pool: { num: 'depthSumRel', den: 'depthCount', scale: 1, sqrt: false },
  },
  {
    id: 'depth_rmse_m',
    unit: 'm',
    better: 'lower',
    label: 'RMS depth error',
    description: 'root mean square of Z_pred - Z_true over the same pixels as depth_relerr',
    read: { region: 'depth_rmse_m' },
    pool: { num: 'depthSumSq', den: 'depthCount', scale: 1, sqrt: true },
  },
  {
    id: 'depth_relmed',
    unit: 'fraction',
    better: 'lower',
    label: 'Median relative depth error',
    description: 'median of |Z_pred - Z_true| / Z_true over the same pixels as depth_relerr (numpy linear method); robust to the few far-off pixels that dominate the mean; not pooled',
    read: { region: 'depth_relmed' },
    pool: null,
  },
  {
    id: 'depth_over1pct',
    unit: '%',
    better: 'lower',
    label: 'Depth off by over 1 %',
    description: "share of the region's pixels with a true depth whose predicted depth is missing (invalid, or not positive) or differs from the truth by more than 1 % of the true depth",
    read: { region: 'depth_over1pct' },
    pool: { num: 'depthBad1', den: 'depthPixels', scale: 100, sqrt: false },
  },
  {
    id: 'depth_over2pct',
    unit: '%',
    better: 'lower',
    label: 'Depth off by over 2 %',
    description: 'as depth_over1pct, with 2 % of the true depth',
    read: { region: 'depth_over2pct' },
    pool: { num: 'depthBad2', den: 'depthPixels', scale: 100, sqrt: false },
  },
  {
    id: 'depth_over5pct',
    unit: '%',
    better: 'lower',
    label: 'Depth off by over 5 %',
    description: 'as depth_over1pct, with 5 % of the true depth',
    read: { region: 'depth_over5pct' },
    pool: { num: 'depthBad5', den: 'depthPixels', scale: 100, sqrt: false },
  },
  {
    id: 'conf_auc',
    unit: 'px',
    better: 'lower',
    label: 'Sparsification area',
    description: 'mean epe of the most confident 100 %, 95 %, ..., 5 % of the valid predictions (20 points; a confidence map needed)',
    read: { region: 'conf_auc' },
    pool: null,
  },
  {
    id: 'conf_oracle_auc',
    unit: 'px',
    better: 'lower',
    label: 'Oracle sparsification area',
    description: 'the same mean when the kept predictions are those with the smallest errors: the best any confidence could do',
    read: { region: 'conf_oracle_auc' },
    pool: null,
  },
  {
    id: 'conf_gap',
    unit: 'px',
    better: 'lower',
    label: 'Confidence gap',
    description: 'conf_auc - conf_oracle_auc: how far the confidence ranking is from the errors\' own (0 = perfect)',
    read: { region: 'conf_gap' },
    pool: null,
  },
  {
    id: 'conf_clean_share',
    unit: '%',
    better: 'higher',
    label: 'Clean share',
    description: 'largest share of the valid predictions, kept most confident first, whose rate over 1 px is at most 1 %',
    read: { region: 'conf_clean_share' },
    pool: null,
  },
  {
    id: 'subpix_lock',
    unit: 'fraction',
    better: 'lower',
    label: 'Pixel-locking',
    description: 'amplitude of the first harmonic of the fractional parts of the valid predictions, |mean exp(2 pi i d)|: 0 = spread evenly, 1 = all alike (whole pixels)',
    read: { region: 'subpix_lock' },
    pool: null,
  },
  {
    id: 'flicker',
    unit: 'px',
    better: 'lower',
    label: 'Flicker',
    description: "mean |change of the prediction - change of the truth| from the previous frame of the pair's sequence, over pixels known and validly predicted in both (frames need a group)",
    read: { region: 'flicker' },
    pool: null,
  },
  {
    id: 'time_ms',
    unit: 'ms',
    better: 'lower',
    label: 'Match time',
    description: 'time of the match: as the matcher reports it, else the wall time around the call; per job, the same in every region; means leave out cached and failed (or timed-out) jobs; not pooled',
    read: { job: 'time_ms' },
    pool: null,
  },
  {
    id: 'peak_mb',
    unit: 'MiB',
    better: 'lower',
    label: 'Peak memory',
    description: 'peak resident memory of the process while the job ran; per job; means leave out cached and failed jobs; not pooled',
    read: { job: 'peak_mb' },
    pool: null,
  },
] as const satisfies readonly CatalogueEntry[];

/** Which levels of the two families a run has. */
export interface MetricSet {
  /** Bad-pixel thresholds in px (ascending, distinct). */
  readonly thresholds: readonly number[];
  /** Quantile levels in % (ascending, distinct, 0..100). */
  readonly quantiles: readonly number[];
  /** The usable range's rule, e.g. `depth_over5pct<=10` (src/stats/usable-range.ts); absent = its default. */
  readonly usableRange?: string;
  /** The breaking point's rule, `region/metric:amount` (src/stats/breaking.ts); absent = its default. */
  readonly breakingPoint?: string;
}

/** Default bad-pixel thresholds in px (over0.25px ... over3px). */
export const DEFAULT_THRESHOLDS: readonly number[] = [0.25, 0.5, 1, 2, 3];

/**
 * Default quantile levels in %: the median, and the shares that one and two standard
 * deviations cover under a normal law (68 %, 95 %), so q68 and q95 read as "1σ" and
 * "2σ" bounds for a Gaussian error.
 */
export const DEFAULT_QUANTILES: readonly number[] = [50, 68, 95];

export const DEFAULT_METRIC_SET: MetricSet = { thresholds: DEFAULT_THRESHOLDS, quantiles: DEFAULT_QUANTILES };

/** Column name of a threshold: 0.25 -> "over0.25px", 1 -> "over1px". */
export function thresholdName(t: number): string {
  return `over${String(t)}px`;
}

/** Column name of a quantile level in %: 68 -> "q68", 99.5 -> "q99.5". */
export function quantileName(p: number): string {
  return `q${String(p)}`;
}

/** One concrete metric of a metric set. */
export interface Metric {
  readonly id: string;
  readonly entry: CatalogueEntry;
  /** Index within its family (threshold k or quantile level k), else -1. */
  readonly index: number;
  readonly unit: CatalogueEntry['unit'];
  readonly better: Better;
  readonly label: string;
  readonly description: string;
  /** Per job (cost), not per region. */
  readonly perJob: boolean;
  /** Pooled recipe with column indices into the sum layout of the set, or null. */
  readonly pool: { readonly num: number; readonly den: number; readonly scale: number; readonly sqrt: boolean } | null;
}

/** Index of the sum columns of a set: the scalar sums, then one `bad` count per threshold. */
export function sumColumnCount(set: MetricSet): number {
  return SCALAR_SUMS.length + set.thresholds.length;
}

function sumColumn(name: SumName, k: number): number {
  return name === 'bad' ? SCALAR_SUMS.length + k : SCALAR_SUMS.indexOf(name);
}

function levelText(v: number): string {
  return String(v);
}

/** The concrete metrics of a set, in column order. */
export function resolveMetrics(set: MetricSet): Metric[] {
  const out: Metric[] = [];
  for (const e of METRIC_CATALOGUE as readonly CatalogueEntry[]) {
    const levels = 'family' in e.read ? (e.read.family === 'rate' ? set.thresholds : set.quantiles) : [null];
    levels.forEach((level, k) => {
      const fill = (s: string): string => (level === null ? s : s.replace('{}', levelText(level)));
      const index = level === null ? -1 : k;
      out.push({
        id: fill(e.id),
        entry: e,
        index,
        unit: e.unit,
        better: e.better,
        label: fill(e.label),
        description: e.description,
        perJob: 'job' in e.read,
        pool: e.pool ? { num: sumColumn(e.pool.num, index), den: sumColumn(e.pool.den, index), scale: e.pool.scale, sqrt: e.pool.sqrt } : null,
      });
    });
  }
  return out;
}

const resolved = new Map<string, Metric[]>();

/** resolveMetrics, kept per set (sets are few and small). */
export function metricsOf(set: MetricSet): readonly Metric[] {
  const key = `${set.thresholds.join(',')}|${set.quantiles.join(',')}`;
  let m = resolved.get(key);
  if (!m) resolved.set(key, (m = resolveMetrics(set)));
  return m;
}

/** The metric with this id in the set, or undefined. */
export function findMetric(set: MetricSet, id: string): Metric | undefined {
  return metricsOf(set).find((m) => m.id === id);
}

const entryPatterns = (METRIC_CATALOGUE as readonly CatalogueEntry[]).map((e) => ({
  e,
  re: new RegExp(`^${e.id.replace(/[.*+?^${}()|[\]\\]/g, '\\$&').replace('\\{\\}', '(\\d+(?:\\.\\d+)?)')}$`),
}));

/** The catalogue entry of a metric id, whatever its level (over0.7px, q99.5), or undefined. */
export function entryOf(id: string): CatalogueEntry | undefined {
  return entryPatterns.find((p) => p.re.test(id))?.e;
}

/** A header in words with its unit once: "End-point error, px". */
export function heading(m: Pick<Metric, 'label' | 'unit'>): string {
  return m.unit === 'fraction' ? `${m.label} (fraction)` : `${m.label}, ${m.unit}`;
}

/**
 * Where a job's own family levels sit for a set: map.rate[k] is the index in the job's
 * rates of the set's threshold k (-1 when the job lacks it), likewise for quantiles.
 */
export interface LevelMap {
  readonly rate: readonly number[];
  readonly quantile: readonly number[];
}

export function levelMapOf(job: { thresholds: readonly number[]; quantiles: readonly number[] }, set: MetricSet): LevelMap {
  return {
    rate: set.thresholds.map((t) => job.thresholds.indexOf(t)),
    quantile: set.quantiles.map((q) => job.quantiles.indexOf(q)),
  };
}

/** Cost of a job, for the per-job metrics. */
export interface JobCost {
  readonly time_ms: number | null;
  readonly peak_mb: number | null;
}

/**
 * The threshold of the rate that ranks configurations by default (the console table, the
 * report): 2 px when measured, else the middle threshold. A rate counts pixels without an
 * answer as errors, so a matcher cannot rank higher by answering less (epe would reward it).
 */
export function keyThreshold(thresholds: readonly number[]): number {
  return thresholds.includes(2) ? 2 : thresholds[Math.floor((thresholds.length - 1) / 2)];
}

/**
 * The cost a job contributes to means of time and memory: none when it came from the
 * result cache (its time was measured by an earlier run) or did not finish (failed,
 * timed out), so that means hold only measured, completed matches.
 */
export function measuredCost(job: JobCost & { readonly status: 'ok' | 'failed'; readonly cached?: boolean }): JobCost {
  if (job.cached === true || job.status !== 'ok') return { time_ms: null, peak_mb: null };
  return { time_ms: job.time_ms, peak_mb: job.peak_mb };
}

/** The value of a metric for one region of one job; null for an empty figure. */
export function metricValue(m: Metric, fig: RegionFigures, map: LevelMap, cost: JobCost): number | null {
  const r = m.entry.read;
  let v: number | null | undefined;
  if ('region' in r) v = fig[r.region];
  else if ('job' in r) v = cost[r.job];
  else {
    const i = (r.family === 'rate' ? map.rate : map.quantile)[m.index] ?? -1;
    v = i < 0 ? null : (r.family === 'rate' ? fig.rates : fig.quantiles)[i];
  }
  return v === undefined ? null : v;
}

/** Fill `out` (length sumColumnCount(set)) with one pair's sums in column order. */
export function readSums(s: RegionSums, map: LevelMap, out: Float64Array): void {
  for (let c = 0; c < SCALAR_SUMS.length; c++) out[c] = s[SCALAR_SUMS[c]] ?? 0; // sums of older results lack the newer fields
  for (let k = 0; k < map.rate.length; k++) out[SCALAR_SUMS.length + k] = s.bad[map.rate[k]] ?? 0;
}

/** Apply a pooled recipe to summed columns; null when the denominator is 0. */
export function pooledFrom(pool: NonNullable<Metric['pool']>, totals: ArrayLike<number>, offset = 0): number | null {
  const den = totals[offset + pool.den];
  if (!(den > 0)) return null;
  const r = (pool.scale * totals[offset + pool.num]) / den;
  return pool.sqrt ? Math.sqrt(r) : r;
}

/** Is `a` better than `b` for this metric? (for bias, by magnitude) */
export function worseningSign(m: Pick<Metric, 'better'>): 1 | -1 {
  return m.better === 'higher' ? -1 : 1;
}

/** The README's metric table, generated from the catalogue (a test keeps the README equal to it). */
export function catalogueMarkdown(): string {
  const rows = (METRIC_CATALOGUE as readonly CatalogueEntry[]).map((e) => {
    const id = e.id.replace('{}', '<t>').replace(/^q<t>$/, 'q<p>');
    const pooled = e.pool ? `${e.pool.sqrt ? 'sqrt(' : ''}${e.pool.scale === 1 ? '' : `${e.pool.scale} × `}${e.pool.num} / ${e.pool.den}${e.pool.sqrt ? ')' : ''}` : 'not pooled';
    const better = e.better === 'higher' ? 'higher' : e.better === 'abs-lower' ? 'smaller magnitude' : 'lower';
    return `| \`${id}\` | ${e.unit} | ${better} | ${e.description.replace(/\|/g, '\\|')} | ${pooled} |`;
  });
  return ['| metric | unit | better | definition | pooled figure |', '|---|---|---|---|---|', ...rows].join('\n') + '\n';
}
