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
import { REGION_BIT, REGION_IDS, type RegionId } from '../core/regions.js';

/** One frame as flicker needs it: prediction, truth and region bits (same size for both frames). */
export interface FrameMaps {
  readonly pred: Float32Array;
  readonly truth: Float32Array;
  readonly bits: Uint8Array;
}

export function flickerByRegion(a: FrameMaps, b: FrameMaps): Record<RegionId, number | null> {
  const n = b.bits.length;
  const out = {} as Record<RegionId, number | null>;
  const sums = new Float64Array(256);
  const counts = new Float64Array(256);
  if (a.bits.length === n) {
    for (let p = 0; p < n; p++) {
      const bits = b.bits[p];
      if (bits === 0 || (a.bits[p] & REGION_BIT.known) === 0) continue;
      const v = b.pred[p] - a.pred[p] - (b.truth[p] - a.truth[p]);
      if (!Number.isFinite(v)) continue;
      sums[bits] += Math.abs(v);
      counts[bits]++;
    }
  }
  for (const id of REGION_IDS) {
    const bit = REGION_BIT[id];
    let s = 0;
    let c = 0;
    for (let k = 1; k < 256; k++) {
      if ((k & bit) === 0) continue;
      s += sums[k];
      c += counts[k];
    }
    out[id] = c > 0 ? s / c : null;
  }
  return out;
}
