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
 *         sJ and sJ2 are the right image's own box sums taken at x - d (computed once),
 *         which is exact wherever the left window lies inside the image
 *         (radius <= x <= width - 1 - radius); the few columns nearer the left and right
 *         edges are summed directly under the same replicate rule. Only the sI*J box sum
 *         is computed per disparity.
 *
 * Only candidates (0 <= x - d < width) get a meaningful cost; other pixels of a slice
 * hold an arbitrary finite value.
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
  /** zncc only: box sums of I, I^2, J, J^2 (fixed) and the per-disparity I*J sums. */
  readonly sumI: Float64Array | null;
  readonly sumI2: Float64Array | null;
  readonly sumR: Float64Array | null;
  readonly sumR2: Float64Array | null;
  readonly sumIJ: Float64Array | null;
  /** zncc only: one column's horizontal sums of J and J^2, for the edge columns. */
  readonly colJ: Float64Array | null;
  readonly colJ2: Float64Array | null;
}

/** Buffers reused across disparities; for zncc also both images' box sums. */
export function createBlockScratch(
  kind: BlockCostKind,
  left: Float32Array,
  right: Float32Array,
  width: number,
  height: number,
  radius: number,
): BlockScratch {
  const n = width * height;
  const pix = new Float64Array(n);
  const tmp = new Float64Array(n);
  if (kind !== 'zncc') {
    return {
      kind,
      width,
      height,
      radius,
      pix,
      tmp,
      sumI: null,
      sumI2: null,
      sumR: null,
      sumR2: null,
      sumIJ: null,
      colJ: null,
      colJ2: null,
    };
  }
  const box = (img: Float32Array, square: boolean): Float64Array => {
    const out = new Float64Array(n);
    if (square) for (let p = 0; p < n; p++) pix[p] = img[p] * img[p];
    else for (let p = 0; p < n; p++) pix[p] = img[p];
    boxSum(pix, out, width, height, radius, tmp);
    return out;
  };
  return {
    kind,
    width,
    height,
    radius,
    pix,
    tmp,
    sumI: box(left, false),
    sumI2: box(left, true),
    sumR: box(right, false),
    sumR2: box(right, true),
    sumIJ: new Float64Array(n),
    colJ: new Float64Array(height),
    colJ2: new Float64Array(height),
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

// absDiffSlice and sqDiffSlice share their loop on purpose: each is the scalar reference that
// the wasm kernel is checked against bit for bit, and a cost callback per pixel would put a
// call into the innermost loop of the slowest path (not measured separately).
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

/** pix = I * J, J the right image shifted by d (right x clamped). */
function productSlice(
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
    for (let x = 0; x < lo; x++) pix[row + x] = left[row + x] * r0;
    for (let x = lo; x < hi; x++) pix[row + x] = left[row + x] * right[off + x];
    for (let x = hi; x < width; x++) pix[row + x] = left[row + x] * r1;
  }
}

function znccSlice(s: BlockScratch, left: Float32Array, right: Float32Array, d: number, out: Float64Array): void {
  const width = s.width;
  const height = s.height;
  const r = s.radius;
  const sumIJ = s.sumIJ!;
  productSlice(left, right, width, height, d, s.pix);
  boxSum(s.pix, sumIJ, width, height, r, s.tmp);
  const sumI = s.sumI!;
  const sumI2 = s.sumI2!;
  const sumR = s.sumR!;
  const sumR2 = s.sumR2!;
  const side = 2 * r + 1;
  const N = side * side;
  const flat = FLAT_VARIANCE * N * N;
  const { lo, hi } = splitRow(width, d);
  // Candidates whose left window lies inside the image: [cLo, cHi).
  const cLo = lo > r ? lo : r;
  let cHi = width - r < hi ? width - r : hi;
  if (cHi < cLo) cHi = cLo;
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < cLo; x++) out[row + x] = 1;
    for (let x = cLo; x < cHi; x++) {
      const p = row + x;
      const si = sumI[p];
      const sj = sumR[p - d];
      const vi = N * sumI2[p] - si * si;
      const vj = N * sumR2[p - d] - sj * sj;
      out[p] = vi <= flat || vj <= flat ? 1 : 1 - (N * sumIJ[p] - si * sj) / Math.sqrt(vi * vj);
    }
    for (let x = cHi; x < width; x++) out[row + x] = 1;
  }
  // Candidates near the left and right edges (at most 2 * radius columns): direct sums.
  const colJ = s.colJ!;
  const colJ2 = s.colJ2!;
  const xmax = width - 1;
  const ymax = height - 1;
  for (let x = lo; x < hi; x++) {
    if (x >= cLo && x < cHi) continue;
    for (let y = 0; y < height; y++) {
      const row = y * width;
      let a = 0;
      let b = 0;
      for (let i = -r; i <= r; i++) {
        let xl = x + i;
        xl = xl < 0 ? 0 : xl > xmax ? xmax : xl;
        let xr = xl - d;
        xr = xr < 0 ? 0 : xr > xmax ? xmax : xr;
        const v = right[row + xr];
        a += v;
        b += v * v;
      }
      colJ[y] = a;
      colJ2[y] = b;
    }
    for (let y = 0; y < height; y++) {
      let sj = 0;
      let sj2 = 0;
      for (let j = -r; j <= r; j++) {
        let yy = y + j;
        yy = yy < 0 ? 0 : yy > ymax ? ymax : yy;
        sj += colJ[yy];
        sj2 += colJ2[yy];
      }
      const p = y * width + x;
      const si = sumI[p];
      const vi = N * sumI2[p] - si * si;
      const vj = N * sj2 - sj * sj;
      out[p] = vi <= flat || vj <= flat ? 1 : 1 - (N * sumIJ[p] - si * sj) / Math.sqrt(vi * vj);
    }
  }
}

/**
 * Luminance rounded to whole levels 0..255 (halves up, as Math.round; clamped; NaN -> 0).
 * SAD and SSD compare these rounded values on both kernels (TypeScript and wasm), so
 * that integer arithmetic in the SIMD kernel gives exactly the reference's costs; the
 * rounding error (<= 0.5 level) is below the noise of 8-bit sensors. ZNCC keeps floats.
 */
export function roundLuminance(src: Float32Array): Float32Array {
  const out = new Float32Array(src.length);
  for (let i = 0; i < src.length; i++) out[i] = roundLevel(src[i]);
  return out;
}

/**
 * One value of roundLuminance (the wasm path writes these straight into bytes):
 * floor(x + 0.5), which equals Math.round(x) for every float32 x (the sum is exact in
 * float64) and runs several times faster in V8 (measured ~20 ns vs ~3 ns per value).
 */
export function roundLevel(x: number): number {
  const v = x + 0.5;
  return v >= 255 ? 255 : v > 0 ? Math.floor(v) : 0;
}
