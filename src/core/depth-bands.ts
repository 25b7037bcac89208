/**
 * Depth bands: the distances by which every region is split (`--depth-bands`).
 *
 * Edges e1 < e2 < ... < em (metres, > 0) give m + 1 bands: [0, e1), [e1, e2), ...,
 * [em, infinity). A pixel belongs to the band whose interval holds its true depth Z
 * (lo <= Z < hi); a pixel without a true depth (unknown truth, or d + cxShiftPx <= the
 * depth cut-off) is in no band. Labels write the edges as given: `0-0.5m`, `2-4m`,
 * `8m+`.
 */
import type { Camera } from './camera.js';
import { UsageError } from './errors.js';

/** Fine depth bins of the usable range: this many per doubling of distance (a bin spans 5.9 %). */
export const PROFILE_BINS_PER_OCTAVE = 12;

/** Parse `0.5,1,2,4,8`; a UsageError naming `option` for anything else. */
export function parseDepthBands(text: string, option = '--depth-bands'): number[] {
  const parts = text.split(',').map((s) => s.trim());
  const edges = parts.map(Number);
  if (parts.some((p) => p === '') || edges.some((e) => !(e > 0) || !Number.isFinite(e))) {
    throw new UsageError(option, `"${text}" must be distances in metres, > 0, separated by commas (e.g. 0.5,1,2,4,8)`);
  }
  for (let i = 1; i < edges.length; i++) {
    if (!(edges[i] > edges[i - 1])) throw new UsageError(option, `"${text}": the distances must increase (${edges[i - 1]} then ${edges[i]})`);
  }
  if (edges.length > 14) throw new UsageError(option, `"${text}": at most 14 distances (15 bands)`);
  return edges;
}

/** The labels of the bands of `edges`, in distance order. */
export function bandLabels(edges: readonly number[]): string[] {
  if (edges.length === 0) return [];
  const out = [`0-${String(edges[0])}m`];
  for (let i = 1; i < edges.length; i++) out.push(`${String(edges[i - 1])}-${String(edges[i])}m`);
  out.push(`${String(edges[edges.length - 1])}m+`);
  return out;
}

/** Band index of a depth (1 = the first band), 0 for a depth that is not finite and positive. */
export function bandIndexOf(z: number, edges: readonly number[]): number {
  if (!(z > 0) || z === Infinity) return 0;
  let k = 0;
  while (k < edges.length && z >= edges[k]) k++;
  return k + 1;
}

/**
 * Default edges from the depth range the data can hold: the camera's depth at the far
 * and near ends of the disparity range, Z = fB / (d + cxShift). The edges are the
 * doublings 2^k m strictly inside that range, at most six, nearest first (the last band
 * takes what lies beyond). Empty without a camera.
 */
export function defaultDepthBands(cameras: readonly Camera[], disparityRanges: readonly (readonly [number, number])[]): number[] {
  let zMin = Infinity;
  let zMax = 0;
  for (const cam of cameras) {
    const fb = cam.focalPx * cam.baselineM;
    for (const [lo, hi] of disparityRanges) {
      const near = hi + cam.cxShiftPx;
      const far = lo + cam.cxShiftPx;
      if (near > 0) zMin = Math.min(zMin, fb / near);
      zMax = Math.max(zMax, far > 0 ? fb / far : Infinity);
    }
  }
  if (!(zMin < zMax)) return [];
  const edges: number[] = [];
  for (let k = Math.floor(Math.log2(zMin)) + 1; edges.length < 6; k++) {
    const e = 2 ** k;
    if (e >= zMax) break;
    edges.push(e);
  }
  return edges;
}
