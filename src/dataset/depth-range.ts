/**
 * The depth range a dataset's truth holds: what `dataset check` reports and what the
 * default depth bands of a run are chosen from.
 *
 * A pixel has a true depth when its truth d is known and d + cxShiftPx > DEFAULT_DEPTH_EPS;
 * then Z = focalPx * baselineM / (d + cxShiftPx). The range is given by the 2nd, 50th and
 * 98th percentiles of Z over those pixels (numpy's default 'linear' method), so that a
 * few stray far or near pixels do not set it, and by the extremes.
 */
import { DEFAULT_DEPTH_EPS, type Camera } from '../core/camera.js';
import { bandsForRange } from '../core/depth-bands.js';
import { quantileSorted } from '../core/quantile.js';
import { pairCamera, sortedPairs, type Manifest } from './manifest.js';
import { readTruth } from './load.js';

export interface DepthRange {
  /** Pixels with a true depth that the figures are over. */
  pixels: number;
  /** Smallest and largest true depth (m). */
  min: number;
  max: number;
  /** 2nd, 50th and 98th percentiles of the true depth (m). */
  near: number;
  median: number;
  far: number;
}

/** The true depths (m) of every `stride`-th pixel of a truth map (disparity, px). */
export function trueDepths(truth: Float32Array, cam: Camera, stride = 1): Float64Array {
  const fb = cam.focalPx * cam.baselineM;
  const out = new Float64Array(Math.ceil(truth.length / stride));
  let n = 0;
  for (let i = 0; i < truth.length; i += stride) {
    const den = truth[i] + cam.cxShiftPx;
    if (den > DEFAULT_DEPTH_EPS) out[n++] = fb / den;
  }
  return out.subarray(0, n);
}

/** The range of a set of true depths; null when there is none. */
export function depthRangeOf(depths: Float64Array): DepthRange | null {
  if (depths.length === 0) return null;
  const z = Float64Array.from(depths).sort();
  return { pixels: z.length, min: z[0], max: z[z.length - 1], near: quantileSorted(z, 0.02), median: quantileSorted(z, 0.5), far: quantileSorted(z, 0.98) };
}

/** The parts one after another in one array. */
export function joined(parts: readonly Float64Array[]): Float64Array {
  const all = new Float64Array(parts.reduce((n, p) => n + p.length, 0));
  let o = 0;
  for (const p of parts) {
    all.set(p, o);
    o += p.length;
  }
  return all;
}

/** At most this many pairs, spread over the sorted pair list, are read for a run's default bands. */
export const BAND_SAMPLE_PAIRS = 8;
/** About this many pixels per pair enter the sample. */
const SAMPLE_PIXELS_PER_PAIR = 50_000;

/**
 * Default depth bands of a run: bandsForRange over the 2nd and 98th percentiles of the
 * true depths of up to BAND_SAMPLE_PAIRS pairs per dataset (spread evenly over each
 * dataset's sorted pairs, pairs with a camera only; every k-th pixel). Pairs whose
 * truth cannot be read are passed over (the run reports them). Empty without a camera.
 */
export async function defaultDepthBandsOf(manifests: readonly Manifest[]): Promise<number[]> {
  const parts: Float64Array[] = [];
  for (const m of manifests) {
    const withCamera = sortedPairs(m).filter((p) => pairCamera(m, p) !== undefined);
    const step = Math.max(1, withCamera.length / BAND_SAMPLE_PAIRS);
    for (let k = 0; k < withCamera.length && parts.length < BAND_SAMPLE_PAIRS * manifests.length; k += step) {
      const entry = withCamera[Math.floor(k)];
      try {
        const truth = await readTruth(m, entry);
        const stride = Math.max(1, Math.floor(truth.data.length / SAMPLE_PIXELS_PER_PAIR));
        parts.push(trueDepths(truth.data, pairCamera(m, entry)!, stride));
      } catch {
        // an unreadable truth: the run records the pair as broken
      }
    }
  }
  const r = depthRangeOf(joined(parts));
  return r ? bandsForRange(r.near, r.far) : [];
}
