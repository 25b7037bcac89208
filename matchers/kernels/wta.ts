/**
 * Winner-take-all over matching costs, left view and right view (the streaming form,
 * one cost slice per level, is in slice-wta.ts).
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

// The U16 and F32 kernels are written twice on purpose: one function over both array
// kinds goes polymorphic in V8. Measured on a 640x360x96 volume (right view with subpixel,
// best of 7 after warm-up, load 1.2-1.6): generic 63-64 ms vs 51-55 ms on Uint16Array
// (about 20 % slower), 94-102 ms vs 87-97 ms on Float32Array. tests compare both kinds.
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

// wtaRightU16 / wtaRightF32: two copies for the reason and with the figures given above wtaU16.
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
