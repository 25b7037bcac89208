/**
 * Statistics of signed errors scattered over several segments of one float64 buffer
 * (the scorer's per-pattern partitions), without gathering them first:
 * count, sum |e|, sum e^2, sum e, the number of |e| strictly above each threshold, and
 * quantiles of |e| with numpy's default 'linear' method. All exact.
 *
 * Two passes over the values:
 * 1. Sums in local float64 accumulators, plus a histogram of the top bits of |e|'s
 *    IEEE-754 high word (exponent and the first 4 mantissa bits: 32768 buckets). For
 *    non-negative doubles that word is monotone in the value, so bucket order is value
 *    order. Prefix counts give, for every wanted order statistic, its bucket and its rank
 *    inside the bucket; and for every threshold t, the values in buckets above t's bucket
 *    (all > t) and below it (all < t).
 * 2. The values of the few buckets that matter (those holding a wanted rank or a
 *    threshold) are copied into a scratch buffer, one run per bucket. Inside a run,
 *    Floyd-Rivest selection gives the exact order statistics and a plain count gives the
 *    exact number of values > t in t's bucket.
 * Buckets with very many equal values only make a run longer; results stay exact.
 * Reads each double's high word through a Uint32Array view (little-endian hosts; on a
 * big-endian host it falls back to gathering, a per-value threshold count and
 * quantilesLinear).
 */
import { lerpNumpy, quantilesLinear, selectInPlace } from './quantile.js';

export interface SegmentStats {
  /** Number of values. */
  count: number;
  sumAbs: number;
  sumSq: number;
  sum: number;
  /** Per threshold (same order as given): values with |e| > t (strict, float64). */
  above: number[];
  /** Quantiles of |e| for the given levels; null when there is no value. */
  quantiles: number[] | null;
}

const SHIFT = 16;
const NBUCKETS = 1 << (31 - SHIFT); // sign bit dropped: |e|
const LITTLE_ENDIAN = new Uint8Array(Uint32Array.of(1).buffer)[0] === 1;
let histA = new Int32Array(0);
let histB = new Int32Array(0);
let slot = new Int32Array(0);
let scratch = new Float64Array(0);

/**
 * Statistics of the values in [starts[s], ends[s]) for s < nSegs (finite signed errors).
 * `values` is not modified. Thresholds may be in any order; `qs` in [0, 1].
 */
export function segmentStats(
  values: Float64Array,
  starts: Int32Array,
  ends: Int32Array,
  nSegs: number,
  thresholds: readonly number[],
  qs: readonly number[],
): SegmentStats {
  for (const q of qs) {
    if (!(q >= 0 && q <= 1)) throw new RangeError(`segmentStats: q=${q} outside [0, 1]`);
  }
  for (const t of thresholds) {
    if (!Number.isFinite(t)) throw new RangeError(`segmentStats: threshold ${t} is not finite`);
  }
  let n = 0;
  for (let s = 0; s < nSegs; s++) n += ends[s] - starts[s];
  const T = thresholds.length;
  if (n === 0) {
    return { count: 0, sumAbs: 0, sumSq: 0, sum: 0, above: new Array<number>(T).fill(0), quantiles: null };
  }
  if (!LITTLE_ENDIAN || n < 2048) return gatherStats(values, starts, ends, nSegs, n, thresholds, qs);

  if (histA.length === 0) {
    histA = new Int32Array(NBUCKETS);
    histB = new Int32Array(NBUCKETS);
    slot = new Int32Array(NBUCKETS).fill(-1);
  }
  const hA = histA;
  const hB = histB;
  hA.fill(0);
  hB.fill(0);
  const words = new Uint32Array(values.buffer, values.byteOffset, values.length * 2);
  // Pass 1. Two histograms (even / odd positions) halve the store-to-load chains when
  // neighbouring values fall in the same bucket.
  let sA = 0;
  let sS = 0;
  let sE = 0;
  for (let s = 0; s < nSegs; s++) {
    const a = starts[s];
    const e = ends[s];
    let i = a;
    for (; i + 1 < e; i += 2) {
      const v0 = values[i];
      const v1 = values[i + 1];
      sE += v0 + v1;
      sS += v0 * v0 + v1 * v1;
      sA += (v0 < 0 ? -v0 : v0) + (v1 < 0 ? -v1 : v1);
      hA[(words[2 * i + 1] & 0x7fffffff) >>> SHIFT]++;
      hB[(words[2 * i + 3] & 0x7fffffff) >>> SHIFT]++;
    }
    if (i < e) {
      const v0 = values[i];
      sE += v0;
      sS += v0 * v0;
      sA += v0 < 0 ? -v0 : v0;
      hA[(words[2 * i + 1] & 0x7fffffff) >>> SHIFT]++;
    }
  }

  // Ranks wanted (ascending, unique) -> bucket and rank inside it.
  const rankList: number[] = [];
  for (const q of qs) {
    const lo = Math.floor((n - 1) * q);
    rankList.push(lo, Math.min(lo + 1, n - 1));
  }
  rankList.sort((x, y) => x - y);
  const ranks = rankList.filter((r, i) => i === 0 || r !== rankList[i - 1]);
  const rankBucket = new Array<number>(ranks.length);
  const rankInBucket = new Array<number>(ranks.length);
  {
    let b = 0;
    let before = 0;
    for (let i = 0; i < ranks.length; i++) {
      while (before + hA[b] + hB[b] <= ranks[i]) {
        before += hA[b] + hB[b];
        b++;
      }
      rankBucket[i] = b;
      rankInBucket[i] = ranks[i] - before;
    }
  }
  // Thresholds -> bucket (-1: t < 0, every |e| is above). Values above t's bucket.
  const tBucket = new Array<number>(T);
  const aboveBucket = new Array<number>(T).fill(0);
  for (let j = 0; j < T; j++) {
    const t = thresholds[j];
    if (t < 0) {
      tBucket[j] = -1;
      continue;
    }
    tBucket[j] = (highWord(t) & 0x7fffffff) >>> SHIFT; // -0 as +0
  }
  {
    // suffix counts only where needed: one sweep from the top bucket down
    const order = Array.from({ length: T }, (_, j) => j)
      .filter((j) => tBucket[j] >= 0)
      .sort((x, y) => tBucket[y] - tBucket[x]);
    let acc = 0;
    let b = NBUCKETS - 1;
    for (const j of order) {
      while (b > tBucket[j]) {
        acc += hA[b] + hB[b];
        b--;
      }
      aboveBucket[j] = acc;
    }
  }

  // Runs of the scratch buffer, one per bucket that matters.
  const runBuckets: number[] = [];
  const runStart: number[] = [];
  const runFill: number[] = [];
  let total = 0;
  const addRun = (b: number): void => {
    if (b < 0 || slot[b] >= 0) return;
    slot[b] = runBuckets.length;
    runBuckets.push(b);
    runStart.push(total);
    runFill.push(total);
    total += hA[b] + hB[b];
  };
  for (const b of rankBucket) addRun(b);
  for (const b of tBucket) addRun(b);
  if (scratch.length < total) scratch = new Float64Array(Math.max(total, 1 << 16));
  const cand = scratch;
  const fill = Int32Array.from(runFill);
  // Pass 2: copy |e| of the wanted buckets.
  for (let s = 0; s < nSegs; s++) {
    const e = ends[s];
    for (let i = starts[s]; i < e; i++) {
      const k = slot[(words[2 * i + 1] & 0x7fffffff) >>> SHIFT];
      if (k >= 0) {
        const v = values[i];
        cand[fill[k]++] = v < 0 ? -v : v;
      }
    }
  }
  for (const b of runBuckets) slot[b] = -1;

  // Threshold counts: above t's bucket plus the exact count inside it (before any
  // selection reorders the runs; order does not matter for counting anyway).
  const above = new Array<number>(T);
  for (let j = 0; j < T; j++) {
    if (tBucket[j] < 0) {
      above[j] = n;
      continue;
    }
    const r = runBuckets.indexOf(tBucket[j]);
    const t = thresholds[j];
    let c = 0;
    const end = runStart[r] + (hA[tBucket[j]] + hB[tBucket[j]]);
    for (let i = runStart[r]; i < end; i++) if (cand[i] > t) c++;
    above[j] = aboveBucket[j] + c;
  }

  // Order statistics: ranks ascending; inside one run each selection narrows the next.
  const stat = new Map<number, number>();
  let lastRun = -1;
  let left = 0;
  for (let i = 0; i < ranks.length; i++) {
    const r = runBuckets.indexOf(rankBucket[i]);
    const rs = runStart[r];
    const re = rs + hA[rankBucket[i]] + hB[rankBucket[i]] - 1;
    if (r !== lastRun) {
      left = rs;
      lastRun = r;
    }
    const k = rs + rankInBucket[i];
    selectInPlace(cand, left, re, k);
    stat.set(ranks[i], cand[k]);
    left = k + 1;
  }
  const quantiles = qs.map((q) => {
    const h = (n - 1) * q;
    const lo = Math.floor(h);
    return lerpNumpy(stat.get(lo)!, stat.get(Math.min(lo + 1, n - 1))!, h - lo);
  });
  return { count: n, sumAbs: sA, sumSq: sS, sum: sE, above, quantiles };
}

/** High 32 bits of a float64, as an unsigned integer. */
function highWord(x: number): number {
  const f = new Float64Array(1);
  f[0] = x;
  return new Uint32Array(f.buffer)[LITTLE_ENDIAN ? 1 : 0];
}

/** Small inputs and big-endian hosts: gather |e| and count directly. */
function gatherStats(
  values: Float64Array,
  starts: Int32Array,
  ends: Int32Array,
  nSegs: number,
  n: number,
  thresholds: readonly number[],
  qs: readonly number[],
): SegmentStats {
  if (scratch.length < n) scratch = new Float64Array(Math.max(n, 1 << 16));
  const cand = scratch;
  let w = 0;
  let sA = 0;
  let sS = 0;
  let sE = 0;
  for (let s = 0; s < nSegs; s++) {
    for (let i = starts[s]; i < ends[s]; i++) {
      const v = values[i];
      const a = v < 0 ? -v : v;
      sE += v;
      sS += v * v;
      sA += a;
      cand[w++] = a;
    }
  }
  const above = thresholds.map((t) => {
    let c = 0;
    for (let i = 0; i < n; i++) if (cand[i] > t) c++;
    return c;
  });
  return { count: n, sumAbs: sA, sumSq: sS, sum: sE, above, quantiles: quantilesLinear(cand, n, qs) };
}
