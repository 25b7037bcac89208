/**
 * Sparsification: how well a matcher's confidence ranks its own errors.
 *
 * Over a region's N valid predictions (finite disparity; a prediction without a
 * confidence, NaN, ranks below every other), with |e| the absolute disparity error:
 * - the confidence curve at share k keeps the ceil(k * N) most confident predictions
 *   (highest confidence first; equal confidences in pixel order) and takes their epe;
 *   k = 100 %, 95 %, ..., 5 % (SPARSIFY_SHARES, 20 points);
 * - the oracle curve keeps the ceil(k * N) smallest errors instead (the best any
 *   confidence could do), so it is never above the confidence curve;
 * - conf_auc and conf_oracle_auc are the means of the 20 points of each curve (px),
 *   conf_gap = conf_auc - conf_oracle_auc (0 for a perfect ranking);
 * - conf_clean_share is the largest share (%) of the N, kept in confidence order, whose
 *   rate over 1 px is at most 1 % (the density at which the output is clean enough to use).
 */
import type { PatternTable } from '../core/regions.js';

/** The shares of the curves, from all predictions down to the most confident 5 %. */
export const SPARSIFY_SHARES: readonly number[] = Array.from({ length: 20 }, (_, i) => (20 - i) / 20);

// Named constants and a figures interface, the shape of power.ts's: each module's own numbers.
/** The error bound and rate of conf_clean_share: at most 1 % of the kept pixels above 1 px. */
export const CLEAN_ERROR_PX = 1;
export const CLEAN_RATE = 0.01;

export interface SparsifyFigures {
  conf_auc: number;
  conf_oracle_auc: number;
  conf_gap: number;
  conf_clean_share: number;
  /** epe at each share of SPARSIFY_SHARES, confidence order and oracle order. */
  conf_curve: number[];
  oracle_curve: number[];
}

/** Kept count at share index i: ceil((20 - i) * N / 20), in integers. */
function keptAt(i: number, n: number): number {
  const j = SPARSIFY_SHARES.length - i;
  return Math.floor((j * n + SPARSIFY_SHARES.length - 1) / SPARSIFY_SHARES.length);
}

/** Figures of n (|error|, confidence) pairs; null when there are none. */
export function sparsify(absErr: Float64Array, conf: Float64Array, n: number): SparsifyFigures | null {
  if (n === 0) return null;
  const order = new Uint32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  order.sort((a, b) => conf[b] - conf[a] || a - b);
  const byConf = new Float64Array(n + 1);
  let bad = 0;
  let clean = 0;
  for (let m = 1; m <= n; m++) {
    const e = absErr[order[m - 1]];
    byConf[m] = byConf[m - 1] + e;
    if (e > CLEAN_ERROR_PX) bad++;
    if (bad <= CLEAN_RATE * m) clean = m;
  }
  const sorted = Float64Array.from(absErr.subarray(0, n)).sort();
  const byError = new Float64Array(n + 1);
  for (let m = 1; m <= n; m++) byError[m] = byError[m - 1] + sorted[m - 1];
  const conf_curve = SPARSIFY_SHARES.map((_, i) => byConf[keptAt(i, n)] / keptAt(i, n));
  const oracle_curve = SPARSIFY_SHARES.map((_, i) => byError[keptAt(i, n)] / keptAt(i, n));
  const mean = (xs: number[]): number => xs.reduce((s, x) => s + x, 0) / xs.length;
  const auc = mean(conf_curve);
  const oracle = mean(oracle_curve);
  return { conf_auc: auc, conf_oracle_auc: oracle, conf_gap: auc - oracle, conf_clean_share: (100 * clean) / n, conf_curve, oracle_curve };
}

let absBuf = new Float64Array(0);
let confBuf = new Float64Array(0);

/**
 * The sparsification figures of one slice (the pixels of the given patterns), from
 * the prediction, the truth and the confidence maps; null when no pixel of the region
 * has a valid prediction.
 */
export function regionSparsify(pred: Float32Array, truth: Float32Array, conf: Float32Array, table: PatternTable, patterns: Int32Array): SparsifyFigures | null {
  const codes = table.codes;
  const len = codes.length;
  if (absBuf.length < len) {
    absBuf = new Float64Array(len);
    confBuf = new Float64Array(len);
  }
  const want = new Uint8Array(table.count);
  for (const p of patterns) want[p] = 1;
  let n = 0;
  for (let p = 0; p < len; p++) {
    if (want[codes[p]] === 0) continue;
    const e = pred[p] - truth[p];
    if (!Number.isFinite(e)) continue;
    const c = conf[p];
    absBuf[n] = Math.abs(e);
    confBuf[n] = c === c ? c : -Infinity;
    n++;
  }
  return sparsify(absBuf, confBuf, n);
}
