/**
 * Flicker: how much a matcher's output changes from one frame of a sequence to the next
 * beyond what the scene does. For consecutive frames a (earlier) and b of one group, and
 * a region R of frame b:
 *
 *   flicker = mean over p of |(P_b(p) - P_a(p)) - (T_b(p) - T_a(p))|   (px)
 *
 * over the pixels p in R of frame b that are also known in frame a and have valid
 * (finite) predictions in both, so that real motion in the truth is not counted. null
 * when no pixel qualifies.
 */
import { REGION_BIT, mapSlices, patternTable, type RegionMap } from '../core/regions.js';

/** One frame as flicker needs it: prediction, truth and regions (same size for both frames). */
export interface FrameMaps {
  readonly pred: Float32Array;
  readonly truth: Float32Array;
  readonly regions: RegionMap;
}

/** Flicker of frame b against the previous frame a, per slice of b's regions (by slice key). */
export function flickerBySlice(a: FrameMaps, b: FrameMaps): Record<string, number | null> {
  const tb = patternTable(b.regions);
  const codes = tb.codes;
  const prev = a.regions.bits;
  const n = codes.length;
  const out: Record<string, number | null> = {};
  const sums = new Float64Array(tb.count);
  const counts = new Float64Array(tb.count);
  if (prev.length === n) {
    for (let p = 0; p < n; p++) {
      const c = codes[p];
      if (c === 0 || (prev[p] & REGION_BIT.known) === 0) continue;
      const v = b.pred[p] - a.pred[p] - (b.truth[p] - a.truth[p]);
      if (!Number.isFinite(v)) continue;
      sums[c] += Math.abs(v);
      counts[c]++;
    }
  }
  for (const sl of mapSlices(b.regions)) {
    let s = 0;
    let c = 0;
    for (const k of sl.patterns) {
      s += sums[k];
      c += counts[k];
    }
    out[sl.key] = c > 0 ? s / c : null;
  }
  return out;
}
