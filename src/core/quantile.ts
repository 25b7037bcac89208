/** A quantile of sorted values (kept in core: datasets, metrics and statistics use it). */
/**
 * Quantile with linear interpolation between order statistics (numpy's default,
 * Hyndman & Fan type 7) of an ascending-sorted array.
 */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  if (p <= 0) return sorted[0];
  if (p >= 1) return sorted[n - 1];
  const pos = p * (n - 1);
  const lo = Math.floor(pos);
  const f = pos - lo;
  const a = sorted[lo];
  return f === 0 ? a : a + f * (sorted[lo + 1] - a);
}
