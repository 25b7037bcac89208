/**
 * Per-disparity cost slices of the block matcher, aggregated over a square window
 * with running box sums (kernels/box.ts): O(1) per pixel per disparity.
 *
 * For disparity d, left pixel (x, y) is compared with right pixel (x - d, y). Where
 * x - d falls outside the right image the right x is clamped (replicate); such
 * pixels are not candidates at that disparity and the WTA stage excludes them
 * (kernels/wta.ts). Windows are replicate-padded at the image borders.
 *
 *   sad   sum over the window of |I - J|
 *   ssd   sum over the window of (I - J)^2
 *   zncc  1 - ZNCC, ZNCC = (N sIJ - sI sJ) / sqrt((N sI2 - sI^2)(N sJ2 - sJ^2)),
 *         N = window pixels, s* = box sums of I, J, I^2, J^2, I*J. When either
 *         window is flat (variance below FLAT_VARIANCE intensity units^2) the
 *         correlation is undefined and the cost is 1 (as for uncorrelated windows).
 */
import { boxSum } from '../kernels/box.js';

export type BlockCostKind = 'sad' | 'ssd' | 'zncc';
export const BLOCK_COSTS: readonly BlockCostKind[] = ['sad', 'ssd', 'zncc'];

/** Window variance (intensity units^2, 0-255 scale) below which ZNCC treats a window as flat. */
export const FLAT_VARIANCE = 1e-6;

export interface BlockScratch {
  readonly kind: BlockCostKind;
  readonly width: number;
  readonly height: number;
  readonly radius: number;
  readonly pix: Float64Array;
  readonly tmp: Float64Array;
  /** zncc only: box sums of I and I^2 (fixed), buffers for J, J^2, I*J. */
  readonly sumI: Float64Array | null;
  readonly sumI2: Float64Array | null;
  readonly sumJ: Float64Array | null;
  readonly sumJ2: Float64Array | null;
  readonly sumIJ: Float64Array | null;
  readonly pix2: Float64Array | null;
}

/** Buffers reused across disparities; for zncc also the left image's box sums. */
export function createBlockScratch(
  kind: BlockCostKind,
  left: Float32Array,
  width: number,
  height: number,
  radius: number,
): BlockScratch {
  const n = width * height;
  const pix = new Float64Array(n);
  const tmp = new Float64Array(n);
  if (kind !== 'zncc') {
    return { kind, width, height, radius, pix, tmp, sumI: null, sumI2: null, sumJ: null, sumJ2: null, sumIJ: null, pix2: null };
  }
  const sumI = new Float64Array(n);
  const sumI2 = new Float64Array(n);
  for (let p = 0; p < n; p++) pix[p] = left[p];
  boxSum(pix, sumI, width, height, radius, tmp);
  for (let p = 0; p < n; p++) pix[p] = left[p] * left[p];
  boxSum(pix, sumI2, width, height, radius, tmp);
  return {
    kind,
    width,
    height,
    radius,
    pix,
    tmp,
    sumI,
    sumI2,
    sumJ: new Float64Array(n),
    sumJ2: new Float64Array(n),
    sumIJ: new Float64Array(n),
    pix2: new Float64Array(n),
  };
}

/** Aggregated cost of every left pixel at disparity d, into `out` (width * height). */
export function blockCostSlice(
  s: BlockScratch,
  left: Float32Array,
  right: Float32Array,
  d: number,
  out: Float64Array,
): void {
  if (s.kind === 'sad') absDiffSlice(left, right, s.width, s.height, d, s.pix);
  else if (s.kind === 'ssd') sqDiffSlice(left, right, s.width, s.height, d, s.pix);
  else {
    znccSlice(s, left, right, d, out);
    return;
  }
  if (s.radius > 0) boxSum(s.pix, out, s.width, s.height, s.radius, s.tmp);
  else out.set(s.pix);
}

/**
 * Columns of a row at disparity d: [0, lo) match right x < 0 (clamped to 0), [lo, hi)
 * match inside, [hi, width) match right x > width - 1 (clamped). Splitting the row
 * keeps index clamping out of the hot loop.
 */
function splitRow(width: number, d: number): { lo: number; hi: number } {
  const lo = d <= 0 ? 0 : d >= width ? width : d;
  let hi = width + d;
  hi = hi < lo ? lo : hi > width ? width : hi;
  return { lo, hi };
}

function absDiffSlice(
  left: Float32Array,
  right: Float32Array,
  width: number,
  height: number,
  d: number,
  pix: Float64Array,
): void {
  const { lo, hi } = splitRow(width, d);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const r0 = right[row];
    const r1 = right[row + width - 1];
    const off = row - d;
    for (let x = 0; x < lo; x++) pix[row + x] = Math.abs(left[row + x] - r0);
    for (let x = lo; x < hi; x++) pix[row + x] = Math.abs(left[row + x] - right[off + x]);
    for (let x = hi; x < width; x++) pix[row + x] = Math.abs(left[row + x] - r1);
  }
}

function sqDiffSlice(
  left: Float32Array,
  right: Float32Array,
  width: number,
  height: number,
  d: number,
  pix: Float64Array,
): void {
  const { lo, hi } = splitRow(width, d);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const r0 = right[row];
    const r1 = right[row + width - 1];
    const off = row - d;
    for (let x = 0; x < lo; x++) {
      const v = left[row + x] - r0;
      pix[row + x] = v * v;
    }
    for (let x = lo; x < hi; x++) {
      const v = left[row + x] - right[off + x];
      pix[row + x] = v * v;
    }
    for (let x = hi; x < width; x++) {
      const v = left[row + x] - r1;
      pix[row + x] = v * v;
    }
  }
}

/** pix = J (the right image shifted by d, clamped), and pix2 = I * J. */
function shiftedRight(
  left: Float32Array,
  right: Float32Array,
  width: number,
  height: number,
  d: number,
  pix: Float64Array,
  pix2: Float64Array,
): void {
  const { lo, hi } = splitRow(width, d);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const r0 = right[row];
    const r1 = right[row + width - 1];
    const off = row - d;
    for (let x = 0; x < lo; x++) {
      pix[row + x] = r0;
      pix2[row + x] = left[row + x] * r0;
    }
    for (let x = lo; x < hi; x++) {
      const j = right[off + x];
      pix[row + x] = j;
      pix2[row + x] = left[row + x] * j;
    }
    for (let x = hi; x < width; x++) {
      pix[row + x] = r1;
      pix2[row + x] = left[row + x] * r1;
    }
  }
}

function znccSlice(s: BlockScratch, left: Float32Array, right: Float32Array, d: number, out: Float64Array): void {
  const width = s.width;
  const height = s.height;
  const n = width * height;
  const pix = s.pix;
  const sumJ = s.sumJ!;
  const sumJ2 = s.sumJ2!;
  const sumIJ = s.sumIJ!;
  const sumI = s.sumI!;
  const sumI2 = s.sumI2!;
  const r = s.radius;
  // J and I*J first; then J^2 in place of J once J's box sum is taken.
  shiftedRight(left, right, width, height, d, pix, s.pix2!);
  boxSum(pix, sumJ, width, height, r, s.tmp);
  boxSum(s.pix2!, sumIJ, width, height, r, s.tmp);
  for (let p = 0; p < n; p++) pix[p] = pix[p] * pix[p];
  boxSum(pix, sumJ2, width, height, r, s.tmp);
  const side = 2 * r + 1;
  const N = side * side;
  const flat = FLAT_VARIANCE * N * N;
  for (let p = 0; p < n; p++) {
    const si = sumI[p];
    const sj = sumJ[p];
    const vi = N * sumI2[p] - si * si;
    const vj = N * sumJ2[p] - sj * sj;
    if (vi <= flat || vj <= flat) {
      out[p] = 1;
      continue;
    }
    out[p] = 1 - (N * sumIJ[p] - si * sj) / Math.sqrt(vi * vj);
  }
}
