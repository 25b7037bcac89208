/**
 * Sub-pixel honesty: whether a matcher's fractional disparities are spread evenly or
 * pulled towards whole pixels (pixel-locking, e.g. a parabola fit on a cost curve).
 *
 * Over a region's valid predictions d (finite, with finite truth):
 * - subpix_lock = |sum exp(2 pi i d)| / n, the amplitude of the first harmonic of the
 *   distribution of frac(d) = d - floor(d): 0 when the fractions are spread evenly over
 *   [0, 1), 1 when they are all the same (e.g. every d a whole number);
 * - frac_hist: counts of frac(d) in SUBPIX_BINS equal bins of [0, 1);
 * - err_by_truth_frac: mean |d - t| per bin of the truth's fractional part frac(t)
 *   (null for an empty bin): a locking matcher errs most where the truth is half-way.
 */
import { REGION_BIT, REGION_IDS, type RegionId } from '../core/regions.js';

export const SUBPIX_BINS = 10;

export interface SubpixelFigures {
  subpix_lock: number;
  frac_hist: number[];
  err_by_truth_frac: (number | null)[];
}

const TWO_PI = 2 * Math.PI;

/** Per region bit pattern (256): cos and sin sums, counts, and the two histograms. */
interface PatternSums {
  cos: Float64Array;
  sin: Float64Array;
  n: Float64Array;
  hist: Float64Array;
  errSum: Float64Array;
  errCount: Float64Array;
}

function bin(x: number): number {
  const f = x - Math.floor(x);
  const b = Math.floor(f * SUBPIX_BINS);
  return b >= SUBPIX_BINS ? SUBPIX_BINS - 1 : b;
}

function patternSums(pred: Float32Array, truth: Float32Array, bits: Uint8Array): PatternSums {
  const s: PatternSums = {
    cos: new Float64Array(256),
    sin: new Float64Array(256),
    n: new Float64Array(256),
    hist: new Float64Array(256 * SUBPIX_BINS),
    errSum: new Float64Array(256 * SUBPIX_BINS),
    errCount: new Float64Array(256 * SUBPIX_BINS),
  };
  for (let p = 0; p < bits.length; p++) {
    const b = bits[p];
    if (b === 0) continue;
    const d = pred[p];
    const t = truth[p];
    if (!Number.isFinite(d) || !Number.isFinite(t)) continue;
    s.cos[b] += Math.cos(TWO_PI * d);
    s.sin[b] += Math.sin(TWO_PI * d);
    s.n[b]++;
    s.hist[b * SUBPIX_BINS + bin(d)]++;
    const k = b * SUBPIX_BINS + bin(t);
    s.errSum[k] += Math.abs(d - t);
    s.errCount[k]++;
  }
  return s;
}

/** The sub-pixel figures of every region; a region without a valid prediction gets none. */
export function subpixelByRegion(pred: Float32Array, truth: Float32Array, bits: Uint8Array): Partial<Record<RegionId, SubpixelFigures>> {
  const s = patternSums(pred, truth, bits);
  const out: Partial<Record<RegionId, SubpixelFigures>> = {};
  for (const id of REGION_IDS) {
    const bit = REGION_BIT[id];
    let c = 0;
    let si = 0;
    let n = 0;
    const hist = new Array<number>(SUBPIX_BINS).fill(0);
    const errSum = new Array<number>(SUBPIX_BINS).fill(0);
    const errCount = new Array<number>(SUBPIX_BINS).fill(0);
    for (let b = 1; b < 256; b++) {
      if ((b & bit) === 0 || s.n[b] === 0) continue;
      c += s.cos[b];
      si += s.sin[b];
      n += s.n[b];
      for (let k = 0; k < SUBPIX_BINS; k++) {
        hist[k] += s.hist[b * SUBPIX_BINS + k];
        errSum[k] += s.errSum[b * SUBPIX_BINS + k];
        errCount[k] += s.errCount[b * SUBPIX_BINS + k];
      }
    }
    if (n === 0) continue;
    out[id] = { subpix_lock: Math.hypot(c, si) / n, frac_hist: hist, err_by_truth_frac: errSum.map((e, k) => (errCount[k] > 0 ? e / errCount[k] : null)) };
  }
  return out;
}
