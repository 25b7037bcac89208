/**
 * Winner-take-all over matching costs, left view and right view.
 *
 * Conventions: levels = maxDisparity - minDisparity + 1; level l means disparity
 * d = minDisparity + l; a left pixel (x, y) at disparity d matches right pixel (x - d, y).
 * Lower cost is better. Ties go to the lowest level.
 *
 * Public API (stable):
 *
 *   EXCLUDED_U16 = 65535   marks an excluded candidate in a Uint16Array volume
 *                          (in a Float32Array volume: +Infinity or NaN)
 *
 *   wta(volume, width, height, levels, minDisparity, opts: WtaOptions): Float32Array
 *     volume: Uint16Array | Float32Array, layout [pixel][level], index p * levels + l.
 *     Left-view disparity per pixel; NaN where every candidate is excluded, or where
 *     the uniqueness test fails. With opts.subpix the parabola offset of
 *     subpixelParabola (postprocess.ts) is added, from the costs at l-1, l, l+1; it is
 *     skipped (offset 0) at the range ends and next to an excluded candidate.
 *     opts.uniqueness (%; 0 or undefined = off): NaN when some level l' with |l' - l| > 1
 *     has cost <= best * (1 + uniqueness / 100).
 *
 *   wtaRight(volume, width, height, levels, minDisparity, opts?: { subpix?: boolean }): Float32Array
 *     Right-view disparity from the same left volume, without recomputing costs:
 *     dR(xr, y) = argmin_d C(xr + d, y, d) over d with 0 <= xr + d < width, indexed
 *     by right x. Subpixel (optional) from C(xr+d-1, d-1), C(xr+d, d), C(xr+d+1, d+1).
 *
 *   Streaming form, for matchers that make one cost slice per disparity and never
 *   hold the volume (block, census):
 *     createSliceWta(width, height, levels, minDisparity, opts: WtaOptions & { right?: boolean }): SliceWta
 *     sliceWtaAdd(state, cost: Float64Array): void     next level's slice, levels in order 0..levels-1;
                                                     keeps a reference to cost until the next call
 *     sliceWtaFinish(state): { left: Float32Array; right: Float32Array | null }
 *   The slice holds the cost of left pixel p at that level (index y * width + x); values
 *   of excluded pixels (x - d outside the right image) are ignored. Results equal wta()
 *   and wtaRight() (right view without subpixel) on the same costs.
 */
import { subpixelParabola } from './postprocess.js';

export const EXCLUDED_U16 = 65535;

export type CostVolume = Uint16Array | Float32Array;

export interface WtaOptions {
  subpix: boolean;
  /** Uniqueness margin in %; 0 or undefined = off. */
  uniqueness?: number;
}

/** Left-view WTA over a compact volume; see the file header. */
export function wta(
  volume: CostVolume,
  width: number,
  height: number,
  levels: number,
  minDisparity: number,
  opts: WtaOptions,
): Float32Array {
  const out = new Float32Array(width * height);
  const u = opts.uniqueness ?? 0;
  if (volume instanceof Uint16Array) wtaU16(volume, width * height, levels, minDisparity, opts.subpix, u, out);
  else wtaF32(volume, width * height, levels, minDisparity, opts.subpix, u, out);
  return out;
}

// Two copies of one loop so each stays monomorphic in its typed-array kind.
function wtaU16(
  vol: Uint16Array,
  n: number,
  levels: number,
  minD: number,
  subpix: boolean,
  u: number,
  out: Float32Array,
): void {
  const factor = 1 + u / 100;
  for (let p = 0; p < n; p++) {
    const base = p * levels;
    let best = EXCLUDED_U16;
    let bl = -1;
    for (let l = 0; l < levels; l++) {
      const c = vol[base + l];
      if (c < best) {
        best = c;
        bl = l;
      }
    }
    if (bl < 0) {
      out[p] = NaN;
      continue;
    }
    if (u > 0) {
      const lim = best * factor;
      let fail = false;
      for (let l = 0; l < levels; l++) {
        if (l >= bl - 1 && l <= bl + 1) continue;
        const c = vol[base + l];
        if (c !== EXCLUDED_U16 && c <= lim) {
          fail = true;
          break;
        }
      }
      if (fail) {
        out[p] = NaN;
        continue;
      }
    }
    let d = minD + bl;
    if (subpix && bl > 0 && bl < levels - 1) {
      const cm = vol[base + bl - 1];
      const cp = vol[base + bl + 1];
      if (cm !== EXCLUDED_U16 && cp !== EXCLUDED_U16) d += subpixelParabola(cm, best, cp);
    }
    out[p] = d;
  }
}

function wtaF32(
  vol: Float32Array,
  n: number,
  levels: number,
  minD: number,
  subpix: boolean,
  u: number,
  out: Float32Array,
): void {
  const factor = 1 + u / 100;
  for (let p = 0; p < n; p++) {
    const base = p * levels;
    let best = Infinity;
    let bl = -1;
    for (let l = 0; l < levels; l++) {
      const c = vol[base + l];
      if (c < best) {
        best = c;
        bl = l;
      }
    }
    if (bl < 0) {
      out[p] = NaN;
      continue;
    }
    if (u > 0) {
      const lim = best * factor;
      let fail = false;
      for (let l = 0; l < levels; l++) {
        if (l >= bl - 1 && l <= bl + 1) continue;
        if (vol[base + l] <= lim) {
          fail = true;
          break;
        }
      }
      if (fail) {
        out[p] = NaN;
        continue;
      }
    }
    let d = minD + bl;
    if (subpix && bl > 0 && bl < levels - 1) {
      d += subpixelParabola(vol[base + bl - 1], best, vol[base + bl + 1]);
    }
    out[p] = d;
  }
}

/** Right-view WTA from the left volume; see the file header. */
export function wtaRight(
  volume: CostVolume,
  width: number,
  height: number,
  levels: number,
  minDisparity: number,
  opts: { subpix?: boolean } = {},
): Float32Array {
  const out = new Float32Array(width * height);
  const subpix = opts.subpix === true;
  if (volume instanceof Uint16Array) wtaRightU16(volume, width, height, levels, minDisparity, subpix, out);
  else wtaRightF32(volume, width, height, levels, minDisparity, subpix, out);
  return out;
}

function wtaRightU16(
  vol: Uint16Array,
  width: number,
  height: number,
  levels: number,
  minD: number,
  subpix: boolean,
  out: Float32Array,
): void {
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let xr = 0; xr < width; xr++) {
      let best = EXCLUDED_U16;
      let bl = -1;
      for (let l = 0; l < levels; l++) {
        const x = xr + minD + l;
        if (x < 0) continue;
        if (x >= width) break;
        const c = vol[(row + x) * levels + l];
        if (c < best) {
          best = c;
          bl = l;
        }
      }
      if (bl < 0) {
        out[row + xr] = NaN;
        continue;
      }
      let d = minD + bl;
      const x = xr + d;
      if (subpix && bl > 0 && bl < levels - 1 && x > 0 && x < width - 1) {
        const cm = vol[(row + x - 1) * levels + bl - 1];
        const cp = vol[(row + x + 1) * levels + bl + 1];
        if (cm !== EXCLUDED_U16 && cp !== EXCLUDED_U16) d += subpixelParabola(cm, best, cp);
      }
      out[row + xr] = d;
    }
  }
}

function wtaRightF32(
  vol: Float32Array,
  width: number,
  height: number,
  levels: number,
  minD: number,
  subpix: boolean,
  out: Float32Array,
): void {
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let xr = 0; xr < width; xr++) {
      let best = Infinity;
      let bl = -1;
      for (let l = 0; l < levels; l++) {
        const x = xr + minD + l;
        if (x < 0) continue;
        if (x >= width) break;
        const c = vol[(row + x) * levels + l];
        if (c < best) {
          best = c;
          bl = l;
        }
      }
      if (bl < 0) {
        out[row + xr] = NaN;
        continue;
      }
      let d = minD + bl;
      const x = xr + d;
      if (subpix && bl > 0 && bl < levels - 1 && x > 0 && x < width - 1) {
        d += subpixelParabola(vol[(row + x - 1) * levels + bl - 1], best, vol[(row + x + 1) * levels + bl + 1]);
      }
      out[row + xr] = d;
    }
  }
}

/** State of the streaming WTA; treat as opaque. */
export interface SliceWta {
  readonly width: number;
  readonly height: number;
  readonly levels: number;
  readonly minDisparity: number;
  readonly subpix: boolean;
  readonly uniqueness: number;
  /** Next level expected. */
  level: number;
  readonly best: Float64Array;
  readonly bestLevel: Int32Array;
  /** Cost at bestLevel - 1 and bestLevel + 1 (Infinity = none). */
  readonly minus: Float64Array;
  readonly plus: Float64Array;
  /** Previous slice (a reference to the caller's buffer, not a copy). */
  prev: Float64Array;
  /** Uniqueness: min over valid levels <= current - 2, and the best non-adjacent cost. */
  readonly lag: Float64Array | null;
  readonly second: Float64Array | null;
  /** Right view: best cost and level per right pixel. */
  readonly bestR: Float64Array | null;
  readonly bestRLevel: Int32Array | null;
}

export function createSliceWta(
  width: number,
  height: number,
  levels: number,
  minDisparity: number,
  opts: WtaOptions & { right?: boolean },
): SliceWta {
  const n = width * height;
  const u = opts.uniqueness ?? 0;
  const best = new Float64Array(n).fill(Infinity);
  const bestLevel = new Int32Array(n).fill(-1);
  return {
    width,
    height,
    levels,
    minDisparity,
    subpix: opts.subpix,
    uniqueness: u,
    level: 0,
    best,
    bestLevel,
    minus: new Float64Array(n).fill(Infinity),
    plus: new Float64Array(n).fill(Infinity),
    prev: new Float64Array(0),
    lag: u > 0 ? new Float64Array(n).fill(Infinity) : null,
    second: u > 0 ? new Float64Array(n).fill(Infinity) : null,
    bestR: opts.right ? new Float64Array(n).fill(Infinity) : null,
    bestRLevel: opts.right ? new Int32Array(n).fill(-1) : null,
  };
}

/**
 * Feeds the next level's cost slice (Float64Array, one value per left pixel).
 * The state keeps a reference to `cost` (no copy) until the next call: alternate two
 * buffers rather than overwriting this one for the next level.
 */
export function sliceWtaAdd(s: SliceWta, cost: Float64Array): void {
  const l = s.level;
  if (l >= s.levels) throw new RangeError('sliceWtaAdd: more slices than levels');
  const width = s.width;
  const d = s.minDisparity + l;
  // Valid left x at this level: 0 <= x - d <= width - 1.
  const x0 = d > 0 ? d : 0;
  const x1 = d < 0 ? width - 1 + d : width - 1;
  // The previous level (d - 1) was valid at x when x - d + 1 <= width - 1, i.e. x <= width - 2 + d.
  const prevHi = l > 0 ? width - 2 + d : -1;
  const best = s.best;
  const bestLevel = s.bestLevel;
  const minus = s.minus;
  const plus = s.plus;
  const prev = s.prev;
  const lag = s.lag;
  const second = s.second;
  const bestR = s.bestR;
  const bestRLevel = s.bestRLevel;
  if (x0 <= x1) {
    for (let y = 0; y < s.height; y++) {
      const row = y * width;
      for (let x = x0; x <= x1; x++) {
        const p = row + x;
        const c = cost[p];
        const prevOk = x <= prevHi;
        const bl = bestLevel[p];
        if (bl === l - 1 && bl >= 0) plus[p] = c;
        if (c < best[p]) {
          if (second !== null && lag !== null) second[p] = lag[p];
          best[p] = c;
          bestLevel[p] = l;
          minus[p] = prevOk ? prev[p] : Infinity;
          plus[p] = Infinity;
        } else if (second !== null && l - bl > 1 && c < second[p]) {
          second[p] = c;
        }
        if (lag !== null && prevOk) {
          const pc = prev[p];
          if (pc < lag[p]) lag[p] = pc;
        }
        if (bestR !== null && bestRLevel !== null) {
          const q = p - d;
          if (c < bestR[q]) {
            bestR[q] = c;
            bestRLevel[q] = l;
          }
        }
      }
    }
  }
  s.prev = cost;
  s.level = l + 1;
}

/** Turns the streamed state into disparity maps (left, and right when asked for). */
export function sliceWtaFinish(s: SliceWta): { left: Float32Array; right: Float32Array | null } {
  const n = s.width * s.height;
  const left = new Float32Array(n);
  const minD = s.minDisparity;
  const last = s.levels - 1;
  const factor = 1 + s.uniqueness / 100;
  const second = s.second;
  for (let p = 0; p < n; p++) {
    const bl = s.bestLevel[p];
    if (bl < 0) {
      left[p] = NaN;
      continue;
    }
    if (second !== null && second[p] <= s.best[p] * factor) {
      left[p] = NaN;
      continue;
    }
    let d = minD + bl;
    if (s.subpix && bl > 0 && bl < last) d += subpixelParabola(s.minus[p], s.best[p], s.plus[p]);
    left[p] = d;
  }
  let right: Float32Array | null = null;
  if (s.bestRLevel !== null) {
    right = new Float32Array(n);
    const rl = s.bestRLevel;
    for (let p = 0; p < n; p++) right[p] = rl[p] < 0 ? NaN : minD + rl[p];
  }
  return { left, right };
}
