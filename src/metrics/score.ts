/**
 * Per-pair scoring: one pass over the pixel maps serves all five regions at once.
 *
 * Definitions (e = prediction - truth, in float64 from the float32 maps; a region's
 * pixels are those whose RegionMap byte has the region's bit; the scorer looks at the
 * region bits only, the region builder decides what is known):
 * - valid prediction: finite. NaN is the only invalid value in memory, but +-Infinity is
 *   treated as invalid too. pred === null (a failed job) = every prediction invalid.
 *   (Defensive: a pixel whose truth is not finite but whose region bit is set counts as
 *   an invalid prediction, since e is not finite.)
 * - pixels, valid; coverage = 100 * valid / pixels (%).
 * - epe = sum|e| / valid; rmse = sqrt(sum e^2 / valid); bias = sum e / valid (px).
 * - bad[t] = pixels with |e| > t (STRICT, float64) or an invalid prediction;
 *   rate = 100 * bad / pixels (%).
 * - quantiles (one per level of opts.quantiles, in %): of |e| over valid predictions,
 *   numpy's default 'linear' method,
 *   found by selection, not by sorting (segment-stats.ts: radix-histogram buckets, then
 *   Floyd-Rivest selection inside the few buckets holding the wanted ranks).
 * - Depth, only with opts.camera: Z = focalPx * baselineM / (d + cxShiftPx).
 *   A pixel enters depth only when its truth has d_t + cxShift > depthEps (default
 *   DEFAULT_DEPTH_EPS = 1e-6 px: a numerical guard against division by ~0 only; raise it
 *   for scenes with far-away truth) and its prediction is valid. Then:
 *     d_p + cxShift > 0  -> counted: depthCount++, depthSumRel += |Zp - Zt| / Zt,
 *                           depthSumSq += (Zp - Zt)^2
 *     d_p + cxShift <= 0 -> a depth FAILURE (no positive depth): depthFail++, left out of
 *                           both means (it has no finite error to average).
 *   Invalid predictions are left out of depth entirely (coverage reports them).
 *   depth_relerr = depthSumRel / depthCount (a FRACTION, 0.05 = 5 %, not a percentage);
 *   depth_rmse_m = sqrt(depthSumSq / depthCount) (metres). null when depthCount is 0.
 * - Empty region (pixels = 0): every figure null, rates included. pixels > 0 and no valid
 *   prediction: coverage 0, rates 100, error figures and quantiles null.
 *
 * - Per slice (src/core/regions.ts): a region whole, and within each depth band of the
 *   map (the pixels whose true depth lies in the band). With a camera also depth_relmed
 *   (median of the relative depth errors counted above, numpy's linear method) and
 *   depth_over1pct/2pct/5pct = 100 * (pixels with a true depth but no valid positive
 *   predicted depth, plus counted ones with a relative error above 1/2/5 %) / pixels
 *   with a true depth; and, for whole regions, the depth profile (depth-profile.ts).
 *
 * Implementation: each pixel's (region bits, band) maps to a dense pattern code
 * (patternTable, few distinct values in practice). Pass 1 counts the
 * pixels of each pattern (a counting-sort layout). Pass 2, the one pass over the maps,
 * writes the signed error e of every valid prediction into its pattern's partition of a
 * float64 buffer (e exactly as numpy computes it) and, with a camera, accumulates the
 * depth sums per pattern. Each region is then the union of the partitions of the
 * patterns that contain its bit: segmentStats reads those partitions in place (sums,
 * exact threshold counts and exact quantiles via a radix histogram plus selection in
 * the few buckets that matter; pass 1 of it runs once per pattern, shared by all regions).
 * bad = invalid + (|e| > t). The buffer is reused between calls (module-level, grown on
 * demand). Why the error sums are not accumulated in the pixel pass itself: that first
 * version (per-pattern sums and a per-threshold histogram updated per pixel) took 62 ms
 * CPU on 3.7 MP without any quantile work, against 39 ms for this collect pass plus all
 * statistics including quantiles (read-modify-write chains through memory per pixel).
 * Whole-pair figures: bench/scoring.ts.
 */
import { mapSlices, patternTable, type PatternTable, type RegionMap } from '../core/regions.js';
import type { PairScore, RegionFigures, RegionSums } from '../core/score.js';
import { DEFAULT_DEPTH_EPS } from '../core/camera.js';
import type { MetricSet } from './catalogue.js';
import type { ScoreOptions } from './types.js';
import { groupStats, type SegmentStats } from './segment-stats.js';
import { regionSparsify } from './sparsify.js';
import { subpixelBySlice } from './subpixel.js';
import { DepthProfiler } from './depth-profile.js';

export { DEFAULT_DEPTH_EPS };

/** The shares of the true depth above which a depth error counts in depth_over1pct, depth_over2pct, depth_over5pct. */
export const DEPTH_RATE_SHARES: readonly number[] = [0.01, 0.02, 0.05];

let valsBuf = new Float64Array(0);
let relBuf = new Float64Array(0);

/**
 * Score one prediction against the truth, per slice (each region whole and within each
 * depth band of the map). With a confidence map (same size, higher = more trusted) the
 * figures also carry sparsification (sparsify.ts).
 */
export function scorePair(pred: Float32Array | null, truth: Float32Array, regions: RegionMap, opts: ScoreOptions, confidence: Float32Array | null = null): PairScore {
  const n = regions.bits.length;
  if (confidence !== null && confidence.length !== n) throw new RangeError(`scorePair: confidence has ${confidence.length} values, the regions ${n}`);
  if (truth.length !== n || (pred !== null && pred.length !== n)) {
    throw new RangeError(
      `scorePair: sizes differ (regions ${n}, truth ${truth.length}, prediction ${pred === null ? 'none' : pred.length})`,
    );
  }
  const thresholds = opts.thresholds;
  for (const t of thresholds) {
    if (!Number.isFinite(t)) throw new RangeError(`scorePair: threshold ${t} is not finite`);
  }
  for (const q of opts.quantiles) {
    if (!(q >= 0 && q <= 100)) throw new RangeError(`scorePair: quantile level ${q} % is not in [0, 100]`);
  }
  const levels = opts.quantiles.map((q) => q / 100);
  const table = patternTable(regions);
  const P = table.count;

  // Pass 1: pixels per pattern, and the partition offsets of the error buffers.
  const count = countPatterns(table.codes, P);
  const start = new Int32Array(P);
  const pos = new Int32Array(P);
  const relPos = new Int32Array(P);
  let total = 0;
  for (let b = 1; b < P; b++) {
    start[b] = total;
    pos[b] = total;
    relPos[b] = total;
    total += count[b];
  }
  if (valsBuf.length < total) valsBuf = new Float64Array(total);
  const depth: DepthSums = { truthCount: new Float64Array(P), sq: new Float64Array(P), fail: new Float64Array(P) };
  const profiler = opts.camera && regions.zbin ? new DepthProfiler(regions, table) : null;

  // Pass 2: signed errors of valid predictions into their pattern's partition.
  if (pred === null) {
    if (opts.camera) countTruthDepth(truth, table.codes, depth.truthCount, depthConstants(opts.camera, opts.depthEps), profiler);
  } else if (opts.camera) {
    if (relBuf.length < total) relBuf = new Float64Array(total);
    collectWithDepth(pred, truth, { codes: table.codes, vals: valsBuf, pos, rels: relBuf, relPos }, depth, depthConstants(opts.camera, opts.depthEps), profiler);
  } else {
    collect(pred, truth, table.codes, valsBuf, pos);
  }

  const nGroups = regions.names.length;
  const views = regions.bands.length + 1;
  const byView: { err: SegmentStats[]; rel: SegmentStats[] | null }[] = [];
  for (let v = 0; v < views; v++) {
    const segs = viewSegments(table, v, start, pos);
    const err = groupStats(valsBuf, segs.start, segs.end, segs.member, segs.n, nGroups, thresholds, levels);
    let rel: SegmentStats[] | null = null;
    if (opts.camera && pred !== null) {
      const rs = viewSegments(table, v, start, relPos);
      rel = groupStats(relBuf, rs.start, rs.end, rs.member, rs.n, nGroups, DEPTH_RATE_SHARES, [0.5]);
    }
    byView.push({ err, rel });
  }

  return assembleSlices({ pred, truth, regions, opts, confidence, table, count, depth, byView, profiler });
}

/** What scorePair has computed, for assembleSlices. */
interface SliceInputs {
  pred: Float32Array | null;
  truth: Float32Array;
  regions: RegionMap;
  opts: ScoreOptions;
  confidence: Float32Array | null;
  table: PatternTable;
  count: Float64Array;
  depth: DepthSums;
  byView: { err: SegmentStats[]; rel: SegmentStats[] | null }[];
  profiler: DepthProfiler | null;
}

/** Each slice's sums and figures from the per-view statistics (plus sub-pixel, sparsification and the depth profile). */
function assembleSlices(x: SliceInputs): PairScore {
  const { pred, truth, regions, opts, confidence, table, count, depth, byView, profiler } = x;
  const slices = mapSlices(regions);
  const subpix = pred !== null ? subpixelBySlice(pred, truth, regions) : {};
  const profiles = profiler?.byRegion() ?? null;
  const out: PairScore = {};
  for (const sl of slices) {
    let pixels = 0;
    let truthCount = 0;
    let depthSumSq = 0;
    let depthFail = 0;
    for (const b of sl.patterns) {
      pixels += count[b];
      truthCount += depth.truthCount[b];
      depthSumSq += depth.sq[b];
      depthFail += depth.fail[b];
    }
    const st = byView[sl.view].err[sl.regionIndex];
    const rel = byView[sl.view].rel?.[sl.regionIndex] ?? null;
    const invalid = pixels - st.count;
    const depthCount = rel ? rel.count : 0;
    const noDepth = truthCount - depthCount; // true depth, but no valid positive predicted depth
    const s: RegionSums = {
      pixels,
      valid: st.count,
      sumAbs: st.sumAbs,
      sumSq: st.sumSq,
      sumErr: st.sum,
      bad: st.above.map((c) => c + invalid),
      depthCount,
      depthSumRel: rel ? rel.sumAbs : 0,
      depthSumSq,
      depthFail,
      depthPixels: opts.camera ? truthCount : 0,
      depthBad1: opts.camera ? noDepth + (rel?.above[0] ?? 0) : 0,
      depthBad2: opts.camera ? noDepth + (rel?.above[1] ?? 0) : 0,
      depthBad5: opts.camera ? noDepth + (rel?.above[2] ?? 0) : 0,
    };
    const figures = figuresFromSums(s, opts, st.quantiles);
    figures.depth_relmed = rel?.quantiles?.[0] ?? null;
    out[sl.key] = { sums: s, figures };
    const sp = subpix[sl.key];
    if (sp) Object.assign(figures, sp);
    if (pred !== null && confidence !== null) {
      const f = regionSparsify(pred, truth, confidence, table, sl.patterns);
      if (f) Object.assign(figures, sl.view === 0 ? f : { conf_auc: f.conf_auc, conf_oracle_auc: f.conf_oracle_auc, conf_gap: f.conf_gap, conf_clean_share: f.conf_clean_share });
    }
    if (profiles && sl.view === 0) {
      const prof = profiles[sl.regionIndex];
      if (prof) out[sl.key].profile = prof;
    }
  }
  return out;
}

/** Per-pattern depth sums: pixels with a true depth, sum of squared depth errors, failures. */
interface DepthSums {
  truthCount: Float64Array;
  sq: Float64Array;
  fail: Float64Array;
}

interface DepthConstants {
  fb: number;
  shift: number;
  eps: number;
}

/** fB, the disparity shift and the truth cut-off of the depth figures; a RangeError for a camera without a positive fB. */
function depthConstants(cam: NonNullable<ScoreOptions['camera']>, depthEps: number | undefined): DepthConstants {
  const fb = cam.focalPx * cam.baselineM;
  if (!(fb > 0) || !Number.isFinite(fb) || !Number.isFinite(cam.cxShiftPx)) {
    throw new RangeError('scorePair: camera needs focalPx * baselineM > 0 and a finite cxShiftPx');
  }
  return { fb, shift: cam.cxShiftPx, eps: depthEps ?? DEFAULT_DEPTH_EPS };
}

/**
 * The partitions [start, end) of the patterns of one view (band index, 0 = all) as
 * segments, each with its region bits as the groups it belongs to.
 */
function viewSegments(t: PatternTable, view: number, start: Int32Array, end: Int32Array): { start: Int32Array; end: Int32Array; member: Int32Array; n: number } {
  const segStart = new Int32Array(t.count);
  const segEnd = new Int32Array(t.count);
  const member = new Int32Array(t.count);
  let n = 0;
  for (let b = 1; b < t.count; b++) {
    if (end[b] === start[b] || (view !== 0 && t.band[b] !== view)) continue;
    segStart[n] = start[b];
    segEnd[n] = end[b];
    member[n] = t.bits[b];
    n++;
  }
  return { start: segStart, end: segEnd, member, n };
}

/**
 * Figures from sums (per pair, or pooled over pairs with quantiles = null).
 * `quantiles` are the values for set.quantiles, in order, or null (no quantiles).
 * Rules in the file comment: null figures for an empty region; null error figures and
 * quantiles with no valid prediction; depth figures null when depthCount is 0.
 */
export function figuresFromSums(sums: RegionSums, set: MetricSet, quantiles: readonly number[] | null): RegionFigures {
  if (sums.bad.length !== set.thresholds.length) {
    throw new RangeError(`figuresFromSums: ${sums.bad.length} bad counts for ${set.thresholds.length} thresholds`);
  }
  const { pixels, valid } = sums;
  const some = pixels > 0;
  const anyValid = valid > 0;
  const q = anyValid && quantiles ? quantiles : null;
  const depth = sums.depthCount > 0;
  return {
    pixels,
    coverage: some ? (100 * valid) / pixels : null,
    epe: anyValid ? sums.sumAbs / valid : null,
    rmse: anyValid ? Math.sqrt(sums.sumSq / valid) : null,
    bias: anyValid ? sums.sumErr / valid : null,
    rates: sums.bad.map((b) => (some ? (100 * b) / pixels : null)),
    quantiles: set.quantiles.map((_, k) => (q ? (q[k] ?? null) : null)),
    depth_relerr: depth ? sums.depthSumRel / sums.depthCount : null,
    depth_rmse_m: depth ? Math.sqrt(sums.depthSumSq / sums.depthCount) : null,
    depth_relmed: null,
    ...depthRates(sums),
  };
}

/** depth_over1pct, 2pct, 5pct from the sums: null without pixels that have a true depth. */
function depthRates(s: RegionSums): Pick<RegionFigures, 'depth_over1pct' | 'depth_over2pct' | 'depth_over5pct'> {
  const den = s.depthPixels ?? 0;
  const rate = (bad: number | undefined): number | null => (den > 0 ? (100 * (bad ?? 0)) / den : null);
  return { depth_over1pct: rate(s.depthBad1), depth_over2pct: rate(s.depthBad2), depth_over5pct: rate(s.depthBad5) };
}

/** All-zero sums for `nThresholds` thresholds. */
export function emptySums(nThresholds: number): RegionSums {
  return {
    pixels: 0,
    valid: 0,
    sumAbs: 0,
    sumSq: 0,
    sumErr: 0,
    bad: new Array<number>(nThresholds).fill(0),
    depthCount: 0,
    depthSumRel: 0,
    depthSumSq: 0,
    depthFail: 0,
    depthPixels: 0,
    depthBad1: 0,
    depthBad2: 0,
    depthBad5: 0,
  };
}

/** a + b, field by field (pooling). Thresholds must match in number and order. */
export function addSums(a: RegionSums, b: RegionSums): RegionSums {
  if (a.bad.length !== b.bad.length) {
    throw new RangeError(`addSums: ${a.bad.length} vs ${b.bad.length} thresholds`);
  }
  return {
    pixels: a.pixels + b.pixels,
    valid: a.valid + b.valid,
    sumAbs: a.sumAbs + b.sumAbs,
    sumSq: a.sumSq + b.sumSq,
    sumErr: a.sumErr + b.sumErr,
    bad: a.bad.map((x, i) => x + b.bad[i]),
    depthCount: a.depthCount + b.depthCount,
    depthSumRel: a.depthSumRel + b.depthSumRel,
    depthSumSq: a.depthSumSq + b.depthSumSq,
    depthFail: (a.depthFail ?? 0) + (b.depthFail ?? 0),
    depthPixels: (a.depthPixels ?? 0) + (b.depthPixels ?? 0),
    depthBad1: (a.depthBad1 ?? 0) + (b.depthBad1 ?? 0),
    depthBad2: (a.depthBad2 ?? 0) + (b.depthBad2 ?? 0),
    depthBad5: (a.depthBad5 ?? 0) + (b.depthBad5 ?? 0),
  };
}

/** Pixels per pattern; four tables break the increment chains of runs. */
function countPatterns(codes: Uint8Array | Uint16Array, P: number): Float64Array {
  const c0 = new Int32Array(P);
  const c1 = new Int32Array(P);
  const c2 = new Int32Array(P);
  const c3 = new Int32Array(P);
  const n = codes.length;
  let i = 0;
  for (; i + 3 < n; i += 4) {
    c0[codes[i]]++;
    c1[codes[i + 1]]++;
    c2[codes[i + 2]]++;
    c3[codes[i + 3]]++;
  }
  for (; i < n; i++) c0[codes[i]]++;
  const out = new Float64Array(P);
  for (let b = 0; b < P; b++) out[b] = c0[b] + c1[b] + c2[b] + c3[b];
  return out;
}

/**
 * Pass 2 without a camera: signed errors of valid predictions into their pattern's
 * partition. The write pointer of the current pattern lives in a local while the pattern
 * stays the same (regions come in long runs), flushed when it changes.
 */
function collect(pred: Float32Array, truth: Float32Array, codes: Uint8Array | Uint16Array, vals: Float64Array, pos: Int32Array): void {
  const n = codes.length;
  let cur = 0;
  let w = pos[0];
  for (let i = 0; i < n; i++) {
    const b = codes[i];
    if (b !== cur) {
      pos[cur] = w;
      cur = b;
      w = pos[b];
    }
    if (b === 0) continue;
    const e = pred[i] - truth[i];
    if (e - e === 0) vals[w++] = e;
  }
  pos[cur] = w;
}

/** A failed job with a camera: only the pixels with a true depth (every one of them a depth failure of the rates). */
function countTruthDepth(truth: Float32Array, codes: Uint8Array | Uint16Array, truthCount: Float64Array, k: DepthConstants, profiler: DepthProfiler | null): void {
  for (let i = 0; i < codes.length; i++) {
    const b = codes[i];
    if (b === 0 || !(truth[i] + k.shift > k.eps)) continue;
    truthCount[b]++;
    profiler?.truthOnly(i, b);
  }
}

/** Where collectWithDepth writes: the pattern codes, the error buffer and the relative depth error buffer with their write positions per pattern. */
interface DepthWriters {
  codes: Uint8Array | Uint16Array;
  vals: Float64Array;
  pos: Int32Array;
  rels: Float64Array;
  relPos: Int32Array;
}

/**
 * Pass 2 with a camera: as collect, plus per pattern the relative depth errors (into a
 * second partitioned buffer: their count, sum, rates and median come from groupStats),
 * the squared depth errors, the pixels with a true depth and the depth failures.
 * Zp - Zt = fB/dp - fB/dt = fB (dt - dp) / (dp dt); |Zp - Zt| / Zt = |dt - dp| / dp: one
 * division instead of three, the same quantities as the file comment defines.
 */
function collectWithDepth(pred: Float32Array, truth: Float32Array, w: DepthWriters, d: DepthSums, k: DepthConstants, profiler: DepthProfiler | null): void {
  const { codes, vals, pos, rels, relPos } = w;
  const { fb, shift, eps } = k;
  const { truthCount, sq, fail } = d;
  const n = codes.length;
  for (let i = 0; i < n; i++) {
    const b = codes[i];
    if (b === 0) continue;
    const p = pred[i];
    const t = truth[i];
    const e = p - t;
    const dt = t + shift;
    const hasDepth = dt > eps;
    if (hasDepth) truthCount[b]++;
    if (e - e === 0) {
      vals[pos[b]++] = e;
      if (hasDepth) {
        const dp = p + shift;
        if (dp > 0) {
          const diff = dt - dp;
          const inv = 1 / (dp * dt);
          const dz = fb * diff * inv;
          const rel = Math.abs(diff) * dt * inv;
          rels[relPos[b]++] = rel;
          sq[b] += dz * dz;
          profiler?.add(i, b, rel, Math.abs(dz), fb / (dt * dt)); // Zt^2 / (fB) = fB / dt^2
        } else {
          fail[b]++;
          profiler?.truthOnly(i, b);
        }
      }
    } else if (hasDepth) {
      profiler?.truthOnly(i, b);
    }
  }
}
