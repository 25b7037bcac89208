/**
 * Depth bands: the distances by which every region is split (`--depth-bands`).
 *
 * Edges e1 < e2 < ... < em (metres, > 0) give m + 1 bands: [0, e1), [e1, e2), ...,
 * [em, infinity). A pixel belongs to the band whose interval holds its true depth Z
 * (lo <= Z < hi); a pixel without a true depth (unknown truth, or d + cxShiftPx <= the
 * depth cut-off) is in no band. Labels write the edges as given: `0-0.5m`, `2-4m`,
 * `8m+`.
 */
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
 * Default edges for depths mostly between `near` and `far` (metres; e.g. the 2nd and
 * 98th percentiles of the true depths): the doublings 2^k m strictly inside (near, far),
 * or, when fewer than two fit, the steps 1, 1.5, 2, 3, 4, 6, 8 x 10^k m inside it; at
 * most six, nearest first. The first band takes what lies nearer, the last what lies
 * beyond. Empty when near >= far.
 */
export function bandsForRange(near: number, far: number): number[] {
  if (!(near > 0 && far > near && far < Infinity)) return [];
  const inside = (cands: number[]): number[] => cands.filter((e) => e > near && e < far).slice(0, MAX_DEFAULT_EDGES);
  const lo = Math.floor(Math.log10(near)) - 1;
  const hi = Math.ceil(Math.log10(far)) + 1;
  const doublings: number[] = [];
  for (let k = Math.floor(Math.log2(near)); 2 ** k < far; k++) doublings.push(2 ** k);
  const twice = inside(doublings);
  if (twice.length >= 2) return twice;
  const steps: number[] = [];
  for (let k = lo; k <= hi; k++) for (const m of [1, 1.5, 2, 3, 4, 6, 8]) steps.push(Number((m * 10 ** k).toPrecision(6)));
  return inside(steps);
}

/** The most edges a default gives (seven bands). */
const MAX_DEFAULT_EDGES = 6;
