/**
 * Geometry helpers for outside programs: edge-replicating pad, crop, and bilinear
 * resampling with pixel-centre alignment (x_src = (x + 0.5) / s - 0.5).
 * Interleaved images carry `channels` samples per pixel.
 */

/** Pad to `outW x outH` on the right and bottom by replicating the last column and row. */
// padEdge and resampleBilinear share a parameter list: both take an interleaved image
// (samples, width, height, channels) and the output size.
export function padEdge<T extends Float32Array | Uint8Array | Uint16Array>(
  src: T,
  width: number,
  height: number,
  channels: number,
  outW: number,
  outH: number,
): T {
  const out = new (src.constructor as { new (n: number): T })(outW * outH * channels);
  for (let y = 0; y < outH; y++) {
    const sy = y < height ? y : height - 1;
    const srow = sy * width * channels;
    const drow = y * outW * channels;
    out.set(src.subarray(srow, srow + width * channels) as never, drow);
    const last = srow + (width - 1) * channels;
    for (let x = width; x < outW; x++) {
      const d = drow + x * channels;
      for (let c = 0; c < channels; c++) out[d + c] = src[last + c];
    }
  }
  return out;
}

/** Top-left `outW x outH` window of a single-channel float image. */
export function cropTopLeft(src: Float32Array, width: number, outW: number, outH: number): Float32Array {
  const out = new Float32Array(outW * outH);
  for (let y = 0; y < outH; y++) out.set(src.subarray(y * width, y * width + outW), y * outW);
  return out;
}

/** Smallest multiple of `n` that is >= v. */
export function roundUpTo(v: number, n: number): number {
  return Math.ceil(v / n) * n;
}

/** Bilinear taps along one axis: for each output index, the two source indices and the weight of the second. */
interface AxisTaps {
  i0: Int32Array;
  i1: Int32Array;
  w: Float64Array;
}

/**
 * Taps for resampling `n` source samples to `outN` with pixel centres aligned:
 * f = (o + 0.5) * n / outN - 0.5 clamped to [0, n - 1], i0 = floor(f), i1 = i0 + 1
 * (or i0 at the last sample), w = f - i0. Computed once per axis, outside pixel loops.
 */
function axisTaps(n: number, outN: number): AxisTaps {
  const s = n / outN;
  const i0 = new Int32Array(outN);
  const i1 = new Int32Array(outN);
  const w = new Float64Array(outN);
  for (let o = 0; o < outN; o++) {
    let f = (o + 0.5) * s - 0.5;
    if (f < 0) f = 0;
    if (f > n - 1) f = n - 1;
    const a = Math.floor(f);
    i0[o] = a;
    i1[o] = a + 1 < n ? a + 1 : a;
    w[o] = f - a;
  }
  return { i0, i1, w };
}

/** One output pixel's four source pixels (row-major indices) and the weights of x1 and y1. */
interface Taps {
  p00: number;
  p01: number;
  p10: number;
  p11: number;
  wx: number;
  wy: number;
}

/** Calls visit for every output pixel of a width x height -> outW x outH resampling, row by row. */
function forEachBilinear(width: number, height: number, outW: number, outH: number, visit: (o: number, t: Taps) => void): void {
  const t: Taps = { p00: 0, p01: 0, p10: 0, p11: 0, wx: 0, wy: 0 }; // reused: no allocation per pixel
  const tx = axisTaps(width, outW);
  const ty = axisTaps(height, outH);
  for (let y = 0; y < outH; y++) {
    const r0 = ty.i0[y] * width;
    const r1 = ty.i1[y] * width;
    t.wy = ty.w[y];
    for (let x = 0; x < outW; x++) {
      const x0 = tx.i0[x];
      const x1 = tx.i1[x];
      t.p00 = r0 + x0;
      t.p01 = r0 + x1;
      t.p10 = r1 + x0;
      t.p11 = r1 + x1;
      t.wx = tx.w[x];
      visit(y * outW + x, t);
    }
  }
}

/**
 * Bilinear resampling of an interleaved image to `outW x outH` (values rounded and
 * clamped for integer arrays). Pixel centres are aligned.
 */
export function resampleBilinear<T extends Float32Array | Uint8Array | Uint16Array>(
  src: T,
  width: number,
  height: number,
  channels: number,
  outW: number,
  outH: number,
): T {
  const out = new (src.constructor as { new (n: number): T })(outW * outH * channels);
  const isInt = !(src instanceof Float32Array);
  const maxV = src instanceof Uint8Array ? 255 : 65535;
  forEachBilinear(width, height, outW, outH, (p, { p00, p01, p10, p11, wx, wy }) => {
    const o = p * channels;
    const i00 = p00 * channels;
    const i01 = p01 * channels;
    const i10 = p10 * channels;
    const i11 = p11 * channels;
    for (let c = 0; c < channels; c++) {
      const v =
        (1 - wy) * ((1 - wx) * src[i00 + c] + wx * src[i01 + c]) + wy * ((1 - wx) * src[i10 + c] + wx * src[i11 + c]);
      out[o + c] = isInt ? (v < 0 ? 0 : v > maxV ? maxV : Math.round(v)) : v;
    }
  });
  return out;
}

/**
 * Resample a disparity map (NaN = invalid) to `outW x outH` and multiply values by
 * `valueScale`. Bilinear over the finite neighbours (weights renormalised); NaN when
 * all four are invalid.
 */
export function resampleDisparity(
  src: Float32Array,
  width: number,
  height: number,
  outW: number,
  outH: number,
  valueScale: number,
): Float32Array {
  const out = new Float32Array(outW * outH);
  forEachBilinear(width, height, outW, outH, (o, { p00, p01, p10, p11, wx, wy }) => {
    const v00 = src[p00];
    const v01 = src[p01];
    const v10 = src[p10];
    const v11 = src[p11];
    let sum = 0;
    let wsum = 0;
    let w = (1 - wy) * (1 - wx);
    if (v00 === v00) {
      sum += w * v00;
      wsum += w;
    }
    w = (1 - wy) * wx;
    if (v01 === v01) {
      sum += w * v01;
      wsum += w;
    }
    w = wy * (1 - wx);
    if (v10 === v10) {
      sum += w * v10;
      wsum += w;
    }
    w = wy * wx;
    if (v11 === v11) {
      sum += w * v11;
      wsum += w;
    }
    out[o] = wsum > 1e-6 ? (sum / wsum) * valueScale : NaN;
  });
  return out;
}
