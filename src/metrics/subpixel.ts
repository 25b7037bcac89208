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
import { mapSlices, patternTable, type RegionMap } from '../core/regions.js';

export const SUBPIX_BINS = 10;

export interface SubpixelFigures {
  subpix_lock: number;
  frac_hist: number[];
  err_by_truth_frac: (number | null)[];
}

const TWO_PI = 2 * Math.PI;

/**
 * cos and sin of 2 pi f for f in [0, 1) without a Math.cos per pixel: a table at steps of
 * 1/4096 and the angle-addition formula with Taylor terms of the remainder b = 2 pi r
 * (|b| < 1.6e-3, so the first omitted term, b^6 / 720, is below 1e-19): equal to Math.cos
 * and Math.sin to rounding.
 */
const TABLE_N = 4096;
const COS_T = Float64Array.from({ length: TABLE_N }, (_, k) => Math.cos((TWO_PI * k) / TABLE_N));
const SIN_T = Float64Array.from({ length: TABLE_N }, (_, k) => Math.sin((TWO_PI * k) / TABLE_N));

/** Per pattern of the map's PatternTable: cos and sin sums, counts, and the two histograms. */
interface PatternSums {
  cos: Float64Array;
  sin: Float64Array;
  n: Float64Array;
  hist: Float64Array;
  errSum: Float64Array;
  errCount: Float64Array;
}

function patternSums(pred: Float32Array, truth: Float32Array, bits: Uint8Array | Uint16Array, P: number): PatternSums {
  const s: PatternSums = {
    cos: new Float64Array(P),
    sin: new Float64Array(P),
    n: new Float64Array(P),
    hist: new Float64Array(P * SUBPIX_BINS),
    errSum: new Float64Array(P * SUBPIX_BINS),
    errCount: new Float64Array(P * SUBPIX_BINS),
  };
  const { cos, sin, n, hist, errSum, errCount } = s;
  for (let p = 0; p < bits.length; p++) {
    const b = bits[p];
    if (b === 0) continue;
    const d = pred[p];
    const t = truth[p];
    if (!(d - d === 0) || !(t - t === 0)) continue; // finite both (NaN and +-Infinity fail)
    let f = d - Math.floor(d);
    if (f >= 1) f = 0; // d - floor(d) rounds to 1 for a d just below a whole number
    const k0 = (f * TABLE_N) | 0;
    const x = TWO_PI * (f - k0 / TABLE_N);
    const x2 = x * x;
    const cb = 1 - (x2 / 2) * (1 - (x2 / 12) * (1 - x2 / 30));
    const sb = x * (1 - (x2 / 6) * (1 - x2 / 20));
    cos[b] += COS_T[k0] * cb - SIN_T[k0] * sb;
    sin[b] += SIN_T[k0] * cb + COS_T[k0] * sb;
    n[b]++;
    const base = b * SUBPIX_BINS;
    hist[base + ((f * SUBPIX_BINS) | 0)]++;
    const ft = t - Math.floor(t);
    const k = base + (ft >= 1 ? 0 : (ft * SUBPIX_BINS) | 0);
    errSum[k] += Math.abs(d - t);
    errCount[k]++;
  }
  return s;
}

/**
 * The sub-pixel figures of every slice of the map (by slice key); a slice without a valid
 * prediction gets none. Within a depth band only subpix_lock (the histograms are the
 * report's, drawn for the whole region).
 */
export function subpixelBySlice(pred: Float32Array, truth: Float32Array, map: RegionMap): Record<string, Partial<SubpixelFigures>> {
  const t = patternTable(map);
  const s = patternSums(pred, truth, t.codes, t.count);
  const out: Record<string, Partial<SubpixelFigures>> = {};
  for (const sl of mapSlices(map)) {
    let c = 0;
    let si = 0;
    let n = 0;
    const hist = new Array<number>(SUBPIX_BINS).fill(0);
    const errSum = new Array<number>(SUBPIX_BINS).fill(0);
    const errCount = new Array<number>(SUBPIX_BINS).fill(0);
    for (const b of sl.patterns) {
      if (s.n[b] === 0) continue;
      c += s.cos[b];
      si += s.sin[b];
      n += s.n[b];
      if (sl.view !== 0) continue;
      for (let k = 0; k < SUBPIX_BINS; k++) {
        hist[k] += s.hist[b * SUBPIX_BINS + k];
        errSum[k] += s.errSum[b * SUBPIX_BINS + k];
        errCount[k] += s.errCount[b * SUBPIX_BINS + k];
      }
    }
    if (n === 0) continue;
    out[sl.key] =
      sl.view === 0
        ? { subpix_lock: Math.hypot(c, si) / n, frac_hist: hist, err_by_truth_frac: errSum.map((e, k) => (errCount[k] > 0 ? e / errCount[k] : null)) }
        : { subpix_lock: Math.hypot(c, si) / n };
  }
  return out;
}
