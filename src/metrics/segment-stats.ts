/**
 * Statistics of signed errors scattered over several segments of one float64 buffer
 * (the scorer's per-pattern partitions), without gathering them first:
 * count, sum |e|, sum e^2, sum e, the number of |e| strictly above each threshold, and
 * quantiles of |e| with numpy's default 'linear' method. All exact.
 *
 * Two passes over the values (groupStats does several groups of segments at once, with
 * pass 1 shared by all groups of a segment):
 * 1. Sums in local float64 accumulators, plus a histogram of the top bits of |e|'s
 *    IEEE-754 high word (11 exponent bits and the first 6 mantissa bits: 2^17 buckets,
 *    64 per binade). For non-negative doubles that word is monotone in the value, so
 *    bucket order is value order. Prefix counts give, for every wanted order statistic, its bucket and its rank
 *    inside the bucket; and for every threshold t, the values in buckets above t's bucket
 *    (all > t) and below it (all < t).
 * 2. The values of the few buckets that matter (those holding a wanted rank or a
 *    threshold) are copied into a scratch buffer, one run per bucket. Inside a run,
 *    Floyd-Rivest selection gives the exact order statistics and a plain count gives the
 *    exact number of values > t in t's bucket.
 * Buckets with very many equal values only make a run longer; results stay exact.
 * Reads each double's high word through a Uint32Array view (little-endian hosts; on a
 * big-endian host it falls back to gathering, a per-value threshold count and
 * quantilesLinear). Histograms, look-up tables and the scratch buffer are module-level
 * and reused between calls (not re-entrant; fine on one thread).
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

const SHIFT = 14; // 14 vs 16 (4 mantissa bits) measured within noise; finer buckets mean fewer candidates
const NBUCKETS = 1 << (31 - SHIFT); // sign bit dropped: |e|
const LITTLE_ENDIAN = new Uint8Array(Uint32Array.of(1).buffer)[0] === 1;
const histPool: Int32Array[] = [];
const slotPool: Int32Array[] = [];
let scratch = new Float64Array(0);

function pooled(pool: Int32Array[], i: number, fill: number): Int32Array {
  while (pool.length <= i) pool.push(new Int32Array(NBUCKETS));
  const h = pool[i];
  h.fill(fill);
  return h;
}

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
  const member = new Int32Array(nSegs).fill(1);
  return groupStats(values, starts, ends, member, nSegs, 1, thresholds, qs)[0];
}

/**
 * Like segmentStats for several groups of segments at once: segment s belongs to group g
 * when bit g of member[s] is set (g < 31). Pass 1 (sums, histogram) runs once per
 * segment, however many groups it belongs to; a group's sums and histogram are the sums
 * of its segments'. Pass 2 (the candidate copy, a table look-up per value) runs once per
 * segment and group.
 */
export function groupStats(
  values: Float64Array,
  starts: Int32Array,
  ends: Int32Array,
  member: Int32Array,
  nSegs: number,
  nGroups: number,
  thresholds: readonly number[],
  qs: readonly number[],
): SegmentStats[] {
  for (const q of qs) {
    if (!(q >= 0 && q <= 1)) throw new RangeError(`segmentStats: q=${q} outside [0, 1]`);
  }
  for (const t of thresholds) {
    if (!Number.isFinite(t)) throw new RangeError(`segmentStats: threshold ${t} is not finite`);
  }
  if (!(nGroups >= 0 && nGroups <= 31)) throw new RangeError(`segmentStats: ${nGroups} groups (at most 31)`);
  if (!LITTLE_ENDIAN) {
    const out: SegmentStats[] = [];
    for (let g = 0; g < nGroups; g++) out.push(gatherStats(values, starts, ends, member, nSegs, 1 << g, thresholds, qs));
    return out;
  }
  const words = new Uint32Array(values.buffer, values.byteOffset, values.length * 2);

  // Pass 1, per segment: sums in locals, histogram of |e|'s top bits. Segments with the
  // same membership share one histogram (bounded memory: at most min(nSegs, 2^nGroups)).
  const segSumA = new Float64Array(nSegs);
  const segSumS = new Float64Array(nSegs);
  const segSumE = new Float64Array(nSegs);
  const sums3 = new Float64Array(3);
  const maskHist = new Map<number, number>(); // membership -> histPool index
  for (let s = 0; s < nSegs; s++) {
    let idx = maskHist.get(member[s]);
    if (idx === undefined) {
      idx = maskHist.size;
      maskHist.set(member[s], idx);
      pooled(histPool, idx, 0);
    }
    histAndSums(values, words, starts[s], ends[s], histPool[idx], sums3);
    segSumA[s] = sums3[0];
    segSumS[s] = sums3[1];
    segSumE[s] = sums3[2];
  }
  const nMasks = maskHist.size;

  // Per group: merged histogram, wanted ranks and threshold buckets, candidate runs.
  const groups: GroupPlan[] = [];
  for (let g = 0; g < nGroups; g++) {
    const bit = 1 << g;
    const hist = pooled(histPool, nMasks + g, 0);
    let n = 0;
    let sA = 0;
    let sS = 0;
    let sE = 0;
    for (let s = 0; s < nSegs; s++) {
      if ((member[s] & bit) === 0) continue;
      n += ends[s] - starts[s];
      sA += segSumA[s];
      sS += segSumS[s];
      sE += segSumE[s];
    }
    for (const [mask, idx] of maskHist) {
      if ((mask & bit) === 0) continue;
      const hs = histPool[idx];
      for (let b = 0; b < NBUCKETS; b++) hist[b] += hs[b];
    }
    groups.push(planGroup(hist, n, sA, sS, sE, thresholds, qs));
  }

  // Candidate buffers: consecutive slices of one reusable scratch buffer.
  let need = 0;
  for (const p of groups) need += p.total;
  if (scratch.length < need) scratch = new Float64Array(Math.max(need, 1 << 16));
  let off = 0;
  for (const p of groups) {
    p.cand = scratch.subarray(off, off + p.total);
    off += p.total;
  }

  // Pass 2: copy |e| of the wanted buckets, segment by segment, group by group.
  const slots: Int32Array[] = [];
  for (let g = 0; g < nGroups; g++) {
    const slot = pooled(slotPool, g, -1);
    const p = groups[g];
    for (let r = 0; r < p.runBuckets.length; r++) slot[p.runBuckets[r]] = r;
    slots.push(slot);
  }
  for (let s = 0; s < nSegs; s++) {
    const gs: number[] = [];
    for (let g = 0; g < nGroups; g++) if ((member[s] & (1 << g)) !== 0 && groups[g].n > 0) gs.push(g);
    const e = ends[s];
    for (const g of gs) {
      // one group at a time keeps the inner loop monomorphic and branch-light
      copyWanted(values, words, starts[s], e, slots[g], groups[g].cand, groups[g].fill);
    }
  }

  return groups.map((p) => finishGroup(p, thresholds, qs));
}

/** Pass 1 over one segment: histogram of |e|'s top bits into h; [sum |e|, sum e^2, sum e]. */
function histAndSums(
  values: Float64Array,
  words: Uint32Array,
  start: number,
  end: number,
  h: Int32Array,
  out: Float64Array,
): void {
  let sA = 0;
  let sS = 0;
  let sE = 0;
  for (let i = start; i < end; i++) {
    const v = values[i];
    sE += v;
    sS += v * v;
    sA += Math.abs(v); // Math.abs, not a branch: signs are random, a branch mispredicts
    h[(words[2 * i + 1] & 0x7fffffff) >>> SHIFT]++;
  }
  out[0] = sA;
  out[1] = sS;
  out[2] = sE;
}

/**
 * Pass 2 over one segment for one group: |e| of values whose bucket has a run goes to it.
 * Few values are wanted (fine buckets), so the branch is mostly predictable; a branch-free
 * variant writing unwanted values to a trash cell measured slower (a store chain).
 */
function copyWanted(
  values: Float64Array,
  words: Uint32Array,
  start: number,
  end: number,
  slot: Int32Array,
  cand: Float64Array,
  fill: Int32Array,
): void {
  for (let i = start; i < end; i++) {
    const k = slot[(words[2 * i + 1] & 0x7fffffff) >>> SHIFT];
    if (k >= 0) cand[fill[k]++] = Math.abs(values[i]);
  }
}

interface GroupPlan {
  n: number;
  sA: number;
  sS: number;
  sE: number;
  hist: Int32Array;
  ranks: number[];
  rankBucket: number[];
  rankInBucket: number[];
  tBucket: number[];
  aboveBucket: number[];
  runBuckets: number[];
  runStart: number[];
  /** Candidate values wanted (sum of the run lengths). */
  total: number;
  /** This group's slice of the shared scratch buffer. */
  cand: Float64Array;
  /** Write pointer of each run. */
  fill: Int32Array;
}

function planGroup(
  hist: Int32Array,
  n: number,
  sA: number,
  sS: number,
  sE: number,
  thresholds: readonly number[],
  qs: readonly number[],
): GroupPlan {
  const T = thresholds.length;
  const plan: GroupPlan = {
    n, sA, sS, sE, hist,
    ranks: [], rankBucket: [], rankInBucket: [], tBucket: [], aboveBucket: [],
    runBuckets: [], runStart: [], total: 0, cand: new Float64Array(0), fill: new Int32Array(0),
  };
  if (n === 0) return plan;
  // Ranks wanted (ascending, unique) -> bucket and rank inside it.
  const rankList: number[] = [];
  for (const q of qs) {
    const lo = Math.floor((n - 1) * q);
    rankList.push(lo, Math.min(lo + 1, n - 1));
  }
  rankList.sort((x, y) => x - y);
  plan.ranks = rankList.filter((r, i) => i === 0 || r !== rankList[i - 1]);
  {
    let b = 0;
    let before = 0;
    for (const r of plan.ranks) {
      while (before + hist[b] <= r) before += hist[b++];
      plan.rankBucket.push(b);
      plan.rankInBucket.push(r - before);
    }
  }
  // Thresholds -> bucket (-1: t < 0, every |e| is above) and the count above that bucket.
  for (let j = 0; j < T; j++) {
    const t = thresholds[j];
    plan.tBucket.push(t < 0 ? -1 : (highWord(t) & 0x7fffffff) >>> SHIFT); // -0 as +0
    plan.aboveBucket.push(0);
  }
  {
    const order = Array.from({ length: T }, (_, j) => j)
      .filter((j) => plan.tBucket[j] >= 0)
      .sort((x, y) => plan.tBucket[y] - plan.tBucket[x]);
    let acc = 0;
    let b = NBUCKETS - 1;
    for (const j of order) {
      while (b > plan.tBucket[j]) acc += hist[b--];
      plan.aboveBucket[j] = acc;
    }
  }
  let total = 0;
  const seen = new Set<number>();
  for (const b of [...plan.rankBucket, ...plan.tBucket]) {
    if (b < 0 || seen.has(b)) continue;
    seen.add(b);
    plan.runBuckets.push(b);
    plan.runStart.push(total);
    total += hist[b];
  }
  plan.total = total;
  plan.fill = Int32Array.from(plan.runStart);
  return plan;
}

function finishGroup(p: GroupPlan, thresholds: readonly number[], qs: readonly number[]): SegmentStats {
  const T = thresholds.length;
  if (p.n === 0) {
    return { count: 0, sumAbs: 0, sumSq: 0, sum: 0, above: new Array<number>(T).fill(0), quantiles: null };
  }
  const cand = p.cand;
  const runOf = (b: number): number => p.runBuckets.indexOf(b);
  // Threshold counts: above t's bucket plus the exact count inside it.
  const above = new Array<number>(T);
  for (let j = 0; j < T; j++) {
    const b = p.tBucket[j];
    if (b < 0) {
      above[j] = p.n;
      continue;
    }
    const rs = p.runStart[runOf(b)];
    const re = rs + p.hist[b];
    const t = thresholds[j];
    let c = 0;
    for (let i = rs; i < re; i++) if (cand[i] > t) c++;
    above[j] = p.aboveBucket[j] + c;
  }
  // Order statistics: ranks ascending; inside one run each selection narrows the next.
  const stat = new Map<number, number>();
  let lastRun = -1;
  let left = 0;
  for (let i = 0; i < p.ranks.length; i++) {
    const b = p.rankBucket[i];
    const r = runOf(b);
    const rs = p.runStart[r];
    const re = rs + p.hist[b] - 1;
    if (r !== lastRun) {
      left = rs;
      lastRun = r;
    }
    const k = rs + p.rankInBucket[i];
    selectInPlace(cand, left, re, k);
    stat.set(p.ranks[i], cand[k]);
    left = k + 1;
  }
  const n = p.n;
  const quantiles = qs.map((q) => {
    const h = (n - 1) * q;
    const lo = Math.floor(h);
    return lerpNumpy(stat.get(lo)!, stat.get(Math.min(lo + 1, n - 1))!, h - lo);
  });
  return { count: n, sumAbs: p.sA, sumSq: p.sS, sum: p.sE, above, quantiles };
}

/** High 32 bits of a float64, as an unsigned integer. */
function highWord(x: number): number {
  const f = new Float64Array(1);
  f[0] = x;
  return new Uint32Array(f.buffer)[LITTLE_ENDIAN ? 1 : 0];
}

/** Big-endian hosts: gather |e| of the group's segments and count directly. */
// gatherStats repeats the group-membership loop of the histogram path on purpose: it is the
// big-endian fallback, kept simple and separate from the little-endian bucket path.
function gatherStats(
  values: Float64Array,
  starts: Int32Array,
  ends: Int32Array,
  member: Int32Array,
  nSegs: number,
  bit: number,
  thresholds: readonly number[],
  qs: readonly number[],
): SegmentStats {
  let n = 0;
  for (let s = 0; s < nSegs; s++) if ((member[s] & bit) !== 0) n += ends[s] - starts[s];
  const cand = new Float64Array(n);
  let w = 0;
  let sA = 0;
  let sS = 0;
  let sE = 0;
  for (let s = 0; s < nSegs; s++) {
    if ((member[s] & bit) === 0) continue;
    for (let i = starts[s]; i < ends[s]; i++) {
      const v = values[i];
      const a = Math.abs(v);
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
  if (n === 0) return { count: 0, sumAbs: 0, sumSq: 0, sum: 0, above, quantiles: null };
  return { count: n, sumAbs: sA, sumSq: sS, sum: sE, above, quantiles: quantilesLinear(cand, n, qs) };
}
