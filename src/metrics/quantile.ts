/**
 * Quantiles by selection, with numpy's default 'linear' method (Hyndman & Fan type 7):
 *
 *   h = (n - 1) * q,  lo = floor(h),  hi = min(lo + 1, n - 1),  g = h - lo
 *   Q(q) = lerp(x_(lo), x_(hi), g)
 *
 * where x_(k) is the k-th order statistic (0-based) and lerp is numpy's two-sided form
 * (a + (b - a) * g for g < 0.5, b - (b - a) * (1 - g) otherwise), so results agree with
 * `np.quantile(values, q)` to the last bit when the inputs are float64.
 *
 * The order statistics are found by selection (Floyd & Rivest 1975, algorithm SELECT,
 * with Hoare partitioning), not by a full sort: O(n) expected per quantile. A selection
 * that goes on too long (pathological input) falls back to a numeric typed-array sort
 * of the remaining range, so the worst case is O(n log n) (introselect style).
 *
 * MUTATES its input: the first n values of `values` are permuted (it is a scratch
 * buffer). NaN values are not allowed (the caller collects finite values only).
 */

type Buf = Float64Array | Float32Array;

/**
 * Quantiles `qs` (each in [0, 1], any order) of the first `n` values of `values`.
 * Returns one number per q in the order of `qs`; all NaN when n is 0.
 * The scratch input is reordered (see the file comment).
 */
export function quantilesLinear(values: Buf, n: number, qs: readonly number[]): number[] {
  if (!Number.isInteger(n) || n < 0 || n > values.length) {
    throw new RangeError(`quantilesLinear: n=${n} outside 0..${values.length}`);
  }
  for (const q of qs) {
    if (!(q >= 0 && q <= 1)) throw new RangeError(`quantilesLinear: q=${q} outside [0, 1]`);
  }
  const out = new Array<number>(qs.length).fill(NaN);
  if (n === 0) return out;

  // The order statistics needed, ascending and de-duplicated.
  const ranks: number[] = [];
  for (const q of qs) {
    const h = (n - 1) * q;
    const lo = Math.floor(h);
    ranks.push(lo, Math.min(lo + 1, n - 1));
  }
  ranks.sort((a, b) => a - b);
  // Select each rank in turn; after selecting k, every value of rank > k sits in (k, n),
  // so the next (larger) rank is selected within [k + 1, n - 1] only.
  const stat = new Map<number, number>();
  let left = 0;
  for (const k of ranks) {
    if (stat.has(k)) continue;
    selectInPlace(values, left, n - 1, k);
    stat.set(k, values[k]);
    left = k + 1;
  }

  for (let i = 0; i < qs.length; i++) {
    const h = (n - 1) * qs[i];
    const lo = Math.floor(h);
    const hi = Math.min(lo + 1, n - 1);
    out[i] = lerpNumpy(stat.get(lo)!, stat.get(hi)!, h - lo);
  }
  return out;
}

/** One quantile; same rules and the same mutation of the scratch input as quantilesLinear. */
export function quantileLinear(values: Buf, n: number, q: number): number {
  return quantilesLinear(values, n, [q])[0];
}

/** numpy's `_lerp`: monotone linear interpolation from a (g = 0) to b (g = 1). */
export function lerpNumpy(a: number, b: number, g: number): number {
  const diff = b - a;
  return g >= 0.5 ? b - diff * (1 - g) : a + diff * g;
}

/**
 * Rearranges a[left..right] so that a[k] holds the value of rank k (within that range),
 * everything in [left, k) is <= a[k] and everything in (k, right] is >= a[k].
 * Floyd-Rivest SELECT with a sampling step on large ranges; falls back to a numeric
 * sort of the remaining range after too many rounds.
 */
export function selectInPlace(a: Buf, left: number, right: number, k: number): void {
  let rounds = 0;
  const maxRounds = 2 * (32 - Math.clz32(right - left + 1)) + 16;
  while (right > left) {
    if (++rounds > maxRounds) {
      a.subarray(left, right + 1).sort(); // typed-array sort is numeric
      return;
    }
    if (right - left > 600) {
      // Sample-based narrowing (Floyd & Rivest): recurse on a window around k that
      // contains the target with high probability.
      const n = right - left + 1;
      const i = k - left + 1;
      const z = Math.log(n);
      const s = 0.5 * Math.exp((2 * z) / 3);
      const sd = 0.5 * Math.sqrt((z * s * (n - s)) / n) * (i - n / 2 < 0 ? -1 : 1);
      const newLeft = Math.max(left, Math.floor(k - (i * s) / n + sd));
      const newRight = Math.min(right, Math.floor(k + ((n - i) * s) / n + sd));
      selectInPlace(a, newLeft, newRight, k);
    }
    // Partition a[left..right] around t = a[k] (Hoare style; equal keys stop both scans,
    // which keeps runs of duplicates balanced).
    const t = a[k];
    let i = left;
    let j = right;
    swap(a, left, k);
    if (a[right] > t) swap(a, left, right);
    while (i < j) {
      swap(a, i, j);
      i++;
      j--;
      while (a[i] < t) i++;
      while (a[j] > t) j--;
    }
    if (a[left] === t) swap(a, left, j);
    else {
      j++;
      swap(a, j, right);
    }
    if (j <= k) left = j + 1;
    if (k <= j) right = j - 1;
  }
}

function swap(a: Buf, i: number, j: number): void {
  const t = a[i];
  a[i] = a[j];
  a[j] = t;
}

