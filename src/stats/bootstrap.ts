/**
 * BCa bootstrap confidence intervals (Efron 1987, "Better bootstrap confidence
 * intervals", JASA 82:171-185; Efron & Tibshirani 1993, ch. 14), resampling whole
 * units: pairs, or a manifest's groups of pairs, never pixels.
 *
 * Data come as a units x columns matrix of per-unit sums. Every statistic is a
 * function of the column totals (e.g. mean over pairs = sum of values / number of
 * non-empty values; pooled epe = sum |e| / valid). A resample draws units with
 * replacement (weights = how often each unit is drawn), so pooled ratios are
 * recomputed in every resample. The acceleration comes from the jackknife (leave one
 * unit out), the bias correction from the share of resamples below the estimate.
 * Endpoints are quantiles of the resampled statistics with linear interpolation.
 */
import { createPrng } from './prng.js';
import { normalCdf, normalQuantile, quantileSorted } from './descriptive.js';

/** Default number of bootstrap resamples (documented in README: `--resamples`). */
export const DEFAULT_RESAMPLES = 2000;
/** Default seed of the resampling PRNG; same seed -> same intervals. */
export const DEFAULT_SEED = 20260;
export const DEFAULT_LEVEL = 0.95;

export interface BootstrapOptions {
  resamples?: number;
  seed?: number;
  /** Two-sided confidence level, default 0.95. */
  level?: number;
}

export interface Interval {
  lo: number;
  hi: number;
  level: number;
  /** Units resampled (pairs or groups). */
  units: number;
  /** Resamples whose statistic was defined (others, e.g. no valid pixel at all, are dropped). */
  resamples: number;
}

/** Per-unit sums: `units` rows of `cols` values, row-major. */
export interface UnitMatrix {
  units: number;
  cols: number;
  data: Float64Array;
}

/** A statistic of the column totals; return NaN where undefined. */
export type TotalsStat = (totals: Float64Array) => number;

function columnTotals(m: UnitMatrix, out: Float64Array): void {
  out.fill(0);
  const { units, cols, data } = m;
  for (let u = 0; u < units; u++) {
    const base = u * cols;
    for (let c = 0; c < cols; c++) out[c] += data[base + c];
  }
}

/**
 * BCa intervals for several statistics of the same units, all sharing the same
 * resamples. Returns null for a statistic that is undefined on the full data, or when
 * there are fewer than 2 units.
 */
export function bcaIntervals(m: UnitMatrix, stats: readonly TotalsStat[], opts: BootstrapOptions = {}): (Interval | null)[] {
  const B = opts.resamples ?? DEFAULT_RESAMPLES;
  const level = opts.level ?? DEFAULT_LEVEL;
  const seed = opts.seed ?? DEFAULT_SEED;
  const n = m.units;
  const S = stats.length;
  if (n < 2 || B < 1) return stats.map(() => null);
  const full = new Float64Array(m.cols);
  columnTotals(m, full);
  const theta = stats.map((f) => f(full));

  // Resamples: one weight vector per resample, shared by every statistic. Identical
  // columns (e.g. the same pair count behind several means) are summed once.
  const { compact, map } = dedupeColumns(m);
  const draws = resampleDraws(seed, n, B);
  const ctot = new Float64Array(compact.cols);
  const tot = new Float64Array(m.cols);
  const boot: Float64Array[] = stats.map(() => new Float64Array(B));
  const k = compact.cols;
  const cdata = compact.data;
  for (let b = 0; b < B; b++) {
    // Draw n units with replacement and add their rows.
    ctot.fill(0);
    const off = b * n;
    for (let i = 0; i < n; i++) {
      const base = draws[off + i] * k;
      for (let c = 0; c < k; c++) ctot[c] += cdata[base + c];
    }
    for (let c = 0; c < m.cols; c++) tot[c] = ctot[map[c]];
    for (let s = 0; s < S; s++) boot[s][b] = stats[s](tot);
  }

  // Jackknife: totals minus one unit.
  const jack: Float64Array[] = stats.map(() => new Float64Array(n));
  for (let u = 0; u < n; u++) {
    const base = u * m.cols;
    for (let c = 0; c < m.cols; c++) tot[c] = full[c] - m.data[base + c];
    for (let s = 0; s < S; s++) jack[s][u] = stats[s](tot);
  }

  const alpha = (1 - level) / 2;
  const zLo = normalQuantile(alpha);
  const zHi = normalQuantile(1 - alpha);
  const out: (Interval | null)[] = [];
  for (let s = 0; s < S; s++) {
    const t = theta[s];
    if (!Number.isFinite(t)) {
      out.push(null);
      continue;
    }
    const vals = finiteSorted(boot[s]);
    if (vals.length === 0) {
      out.push(null);
      continue;
    }
    out.push(bcaFromSamples(t, vals, jack[s], { zLo, zHi, level }, n));
  }
  return out;
}

/**
 * The unit indices of B resamples of n units (B * n draws, resample-major) for a seed.
 * The same (seed, n, B) always gives the same draws; the last few are kept, since a
 * report resamples many cells of the same pairs.
 */
const drawCache = new Map<string, Int32Array>();
export function resampleDraws(seed: number, n: number, B: number): Int32Array {
  const key = `${seed}:${n}:${B}`;
  const hit = drawCache.get(key);
  if (hit) return hit;
  const rng = createPrng(seed);
  const out = new Int32Array(n * B);
  for (let i = 0; i < out.length; i++) out[i] = rng.int(n);
  if (drawCache.size >= 8) drawCache.delete(drawCache.keys().next().value as string);
  drawCache.set(key, out);
  return out;
}

/** The distinct columns of a matrix, and for each original column its distinct index. */
function dedupeColumns(m: UnitMatrix): { compact: UnitMatrix; map: Int32Array } {
  const map = new Int32Array(m.cols);
  const keep: number[] = [];
  const seen = new Map<string, number>();
  const col = new Float64Array(m.units);
  for (let c = 0; c < m.cols; c++) {
    for (let u = 0; u < m.units; u++) col[u] = m.data[u * m.cols + c];
    const key = Array.prototype.join.call(col, ',');
    const at = seen.get(key);
    if (at !== undefined) map[c] = at;
    else {
      seen.set(key, keep.length);
      map[c] = keep.length;
      keep.push(c);
    }
  }
  const k = keep.length;
  const data = new Float64Array(m.units * k);
  for (let u = 0; u < m.units; u++) for (let j = 0; j < k; j++) data[u * k + j] = m.data[u * m.cols + keep[j]];
  return { compact: { units: m.units, cols: k, data }, map };
}

function finiteSorted(xs: Float64Array): Float64Array {
  let k = 0;
  const tmp = new Float64Array(xs.length);
  for (let i = 0; i < xs.length; i++) if (Number.isFinite(xs[i])) tmp[k++] = xs[i];
  return tmp.subarray(0, k).sort();
}

/**
 * The BCa endpoints from sorted bootstrap replicates and jackknife values.
 * z0 = Phi^-1(share of replicates below the estimate, ties counted half);
 * a = sum (mean - jack_i)^3 / (6 (sum (mean - jack_i)^2)^1.5).
 */
export function bcaFromSamples(
  theta: number,
  sorted: Float64Array,
  jackValues: Float64Array,
  z: { zLo: number; zHi: number; level: number },
  units: number,
): Interval {
  const { zLo, zHi, level } = z;
  const B = sorted.length;
  if (sorted[0] === sorted[B - 1]) return { lo: sorted[0], hi: sorted[0], level, units, resamples: B };
  let below = 0;
  let equal = 0;
  for (let i = 0; i < B; i++) {
    if (sorted[i] < theta) below++;
    else if (sorted[i] === theta) equal++;
  }
  let share = (below + 0.5 * equal) / B;
  // Keep z0 finite when the estimate lies outside every replicate.
  share = Math.min(Math.max(share, 0.5 / B), 1 - 0.5 / B);
  const z0 = normalQuantile(share);

  let jm = 0;
  let jn = 0;
  for (let i = 0; i < jackValues.length; i++) {
    if (Number.isFinite(jackValues[i])) {
      jm += jackValues[i];
      jn++;
    }
  }
  jm /= jn || 1;
  let num = 0;
  let den = 0;
  for (let i = 0; i < jackValues.length; i++) {
    const v = jackValues[i];
    if (!Number.isFinite(v)) continue;
    const d = jm - v;
    num += d * d * d;
    den += d * d;
  }
  const a = den > 0 ? num / (6 * Math.pow(den, 1.5)) : 0;

  const adj = (z: number): number => {
    const s = z0 + z;
    const q = 1 - a * s;
    if (!(q > 0)) return s > 0 ? 1 : 0;
    return normalCdf(z0 + s / q);
  };
  const pLo = adj(zLo);
  const pHi = adj(zHi);
  return { lo: quantileSorted(sorted, pLo), hi: quantileSorted(sorted, pHi), level, units, resamples: B };
}

/** Convenience: BCa interval of a plain mean of numbers (each number one unit). */
export function bcaMean(xs: readonly number[], opts: BootstrapOptions = {}): Interval | null {
  const data = new Float64Array(xs.length * 2);
  for (let i = 0; i < xs.length; i++) {
    data[2 * i] = xs[i];
    data[2 * i + 1] = 1;
  }
  return bcaIntervals({ units: xs.length, cols: 2, data }, [(t) => (t[1] > 0 ? t[0] / t[1] : NaN)], opts)[0];
}
