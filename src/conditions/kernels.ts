/**
 * Image kernels of the camera faults, on single-channel float planes (row-major):
 * a sampled Gaussian blur, a bilinear affine warp, area and nearest resampling, and
 * sensor noise. Each is checked against an outside reference in
 * test/conditions/kernels.test.ts (OpenCV, numpy).
 */
/** A uniform generator on [0, 1) (src/core/prng.ts). */
export type Uniform = () => number;

/** Radius of the sampled Gaussian: ceil(3 sigma), at least 1. */
export function gaussianRadius(sigma: number): number {
  return Math.max(1, Math.ceil(3 * sigma));
}

/** exp(-i^2 / (2 sigma^2)) for i = -r..r, normalised to sum 1. */
export function gaussianKernel(sigma: number, radius = gaussianRadius(sigma)): Float64Array {
  const k = new Float64Array(2 * radius + 1);
  let sum = 0;
  for (let i = -radius; i <= radius; i++) sum += k[i + radius] = Math.exp(-(i * i) / (2 * sigma * sigma));
  for (let i = 0; i < k.length; i++) k[i] /= sum;
  return k;
}

/** Index of a sample outside [0, n) mirrored about the edge samples (…2 1 | 0 1 2 … n-1 | n-2 …). */
function reflect101(i: number, n: number): number {
  if (n === 1) return 0;
  const period = 2 * (n - 1);
  let j = ((i % period) + period) % period;
  if (j >= n) j = period - j;
  return j;
}

/** Separable Gaussian blur, edges mirrored without repeating the edge sample; sigma 0 = copy. */
export function blurPlane(src: Float32Array, w: number, h: number, sigma: number): Float32Array {
  if (!(sigma > 0)) return src.slice();
  const k = gaussianKernel(sigma);
  const r = (k.length - 1) >> 1;
  const tmp = new Float64Array(w * h);
  for (let y = 0; y < h; y++) {
    const row = y * w;
    for (let x = 0; x < w; x++) {
      let s = 0;
      for (let i = -r; i <= r; i++) s += k[i + r] * src[row + reflect101(x + i, w)];
      tmp[row + x] = s;
    }
  }
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      let s = 0;
      for (let i = -r; i <= r; i++) s += k[i + r] * tmp[reflect101(y + i, h) * w + x];
      out[y * w + x] = s;
    }
  }
  return out;
}

/**
 * Affine warp with bilinear interpolation and edge replication: out(x, y) = src(a x + b y + c, d x + e y + f),
 * `m` = [a, b, c, d, e, f] mapping output pixels to source positions (pixel centres at integers).
 */
export function warpAffinePlane(src: Float32Array, w: number, h: number, m: readonly number[]): Float32Array {
  const [a, b, c, d, e, f] = m as [number, number, number, number, number, number];
  const out = new Float32Array(w * h);
  const at = (x: number, y: number): number => src[(y < 0 ? 0 : y >= h ? h - 1 : y) * w + (x < 0 ? 0 : x >= w ? w - 1 : x)];
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const sx = a * x + b * y + c;
      const sy = d * x + e * y + f;
      const x0 = Math.floor(sx);
      const y0 = Math.floor(sy);
      const fx = sx - x0;
      const fy = sy - y0;
      const top = at(x0, y0) * (1 - fx) + at(x0 + 1, y0) * fx;
      const bottom = at(x0, y0 + 1) * (1 - fx) + at(x0 + 1, y0 + 1) * fx;
      out[y * w + x] = top * (1 - fy) + bottom * fy;
    }
  }
  return out;
}

/**
 * The source positions of a right image rotated by `mrad` about its centre and moved down
 * by `vshift` px: out(p) = src(R(-theta) (p - c - (0, vshift)) + c), theta counter-clockwise on screen.
 */
export function faultWarp(w: number, h: number, vshift: number, mrad: number): number[] {
  const t = mrad / 1000;
  const cx = (w - 1) / 2;
  const cy = (h - 1) / 2;
  // On screen (y down) a counter-clockwise turn by t maps (dx, dy) to (dx cos t + dy sin t, -dx sin t + dy cos t).
  const cos = Math.cos(t);
  const sin = Math.sin(t);
  // Inverse: source = R^-1 (p - c - v) + c with R^-1 = [[cos, -sin], [sin, cos]].
  const ox = -cx;
  const oy = -cy - vshift;
  return [cos, -sin, cos * ox - sin * oy + cx, sin, cos, sin * ox + cos * oy + cy];
}

/** Weights of the source cells an output cell of an area resample covers (one axis). */
function areaWeights(n: number, m: number): { start: Int32Array; weights: Float64Array[] } {
  const scale = n / m;
  const start = new Int32Array(m);
  const weights: Float64Array[] = [];
  for (let o = 0; o < m; o++) {
    const lo = o * scale;
    const hi = (o + 1) * scale;
    const first = Math.floor(lo);
    const last = Math.min(n - 1, Math.ceil(hi) - 1);
    const wts = new Float64Array(last - first + 1);
    for (let i = first; i <= last; i++) wts[i - first] = (Math.min(hi, i + 1) - Math.max(lo, i)) / scale;
    start[o] = first;
    weights.push(wts);
  }
  return { start, weights };
}

/** Downscale by averaging the source area each output pixel covers (an exact box filter). */
export function areaResample(src: Float32Array, w: number, h: number, w2: number, h2: number): Float32Array {
  const ax = areaWeights(w, w2);
  const ay = areaWeights(h, h2);
  const tmp = new Float64Array(h * w2);
  for (let y = 0; y < h; y++) {
    for (let o = 0; o < w2; o++) {
      const wts = ax.weights[o];
      let s = 0;
      for (let i = 0; i < wts.length; i++) s += wts[i] * src[y * w + ax.start[o] + i];
      tmp[y * w2 + o] = s;
    }
  }
  const out = new Float32Array(w2 * h2);
  for (let o = 0; o < h2; o++) {
    const wts = ay.weights[o];
    for (let x = 0; x < w2; x++) {
      let s = 0;
      for (let i = 0; i < wts.length; i++) s += wts[i] * tmp[(ay.start[o] + i) * w2 + x];
      out[o * w2 + x] = s;
    }
  }
  return out;
}

/** The source index of each output pixel of a nearest resample: the source pixel under the output pixel's centre. */
export function nearestIndex(w: number, h: number, w2: number, h2: number): Int32Array {
  const idx = new Int32Array(w2 * h2);
  for (let y = 0; y < h2; y++) {
    const sy = Math.min(h - 1, Math.floor(((y + 0.5) * h) / h2));
    for (let x = 0; x < w2; x++) idx[y * w2 + x] = sy * w + Math.min(w - 1, Math.floor(((x + 0.5) * w) / w2));
  }
  return idx;
}

/** A standard normal sample (Box-Muller). */
export function gaussian(rng: Uniform): number {
  let u = rng();
  while (u <= 0) u = rng();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng());
}

/** Grey level (0-255 scale) at which the noise's sigma is the condition's strength. */
export const NOISE_MID_GREY = 128;

/**
 * Sigma of the sensor noise at grey level `v`: read noise plus shot noise, each half the
 * variance at mid grey, so sigma(v)^2 = s^2 / 2 * (1 + v / 128) (v clamped at 0).
 */
export function noiseSigmaAt(strength: number, v: number): number {
  return Math.sqrt(((strength * strength) / 2) * (1 + Math.max(0, v) / NOISE_MID_GREY));
}

/** The noise field of one camera: a sample per pixel with sigma from the pixel's grey level (0-255 scale). */
export function noiseField(gray: Float32Array, strength: number, rng: Uniform): Float32Array {
  const out = new Float32Array(gray.length);
  if (!(strength > 0)) return out;
  for (let i = 0; i < gray.length; i++) out[i] = gaussian(rng) * noiseSigmaAt(strength, gray[i]);
  return out;
}
