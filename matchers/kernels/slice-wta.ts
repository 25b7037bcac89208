/**
 * Streaming winner-take-all, for matchers that make one cost slice per disparity and
 * never hold the volume (block, census): createSliceWta, then sliceWtaAdd per level in
 * order, then sliceWtaFinish. Results equal wta() and wtaRight() (right view without
 * subpixel) of wta.ts on the same costs; see wta.ts for the conventions.
 */
import { subpixelParabola } from './postprocess.js';
import type { WtaOptions } from './wta.js';

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
