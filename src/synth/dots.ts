/**
 * Random-dot stereograms (after Julesz 1960, 1971): every pixel is a random dark or bright
 * dot, and depth exists only through the shift between the two views.
 *
 * Layers are axis-aligned rectangles in left-image pixel coordinates, each at an integer
 * disparity; a layer with a larger disparity is nearer and covers the ones behind it. The
 * background layer covers the whole image. Each layer has its own dot field T_L(u, y),
 * fixed to the layer (u = the left x coordinate of the point), so:
 *   left(x, y)  = T_L(x, y)           for L = the nearest layer containing x in row y
 *   right(x, y) = T_M(x + d_M, y)     for M = the nearest layer with x + d_M inside it
 *   truth(x, y) = d_L
 *   occluded    = x - d_L < 0 (outside the right frame) or M(x - d_L) != L.
 * Disparities are integers, so truth, images and mask are exact (no resampling).
 */
import type { RasterImage } from '../core/image.js';
import { UsageError } from '../core/errors.js';
import { hash32, polarDraw, subSeed } from './prng.js';
import type { StereoRender } from './render.js';

export interface DotLayer {
  /** Left-image pixel rectangle [x0, x1) x [y0, y1). */
  readonly x0: number;
  readonly x1: number;
  readonly y0: number;
  readonly y1: number;
  /** Integer disparity (px); larger = nearer. */
  readonly disparity: number;
}

export interface RandomDotOptions {
  width: number;
  height: number;
  seed: number;
  /** Background disparity (integer, default max(1, round(width / 60))). */
  background?: number;
  /** Layers in front of the background; default a raised square and a smaller square on it. */
  layers?: readonly DotLayer[];
  /** Share of bright dots (default 0.5). */
  density?: number;
  /** Dark and bright dot values in 8-bit codes (default 40 and 215). */
  levels?: readonly [number, number];
  /** Gaussian noise in codes, independent per view (default 0). */
  noiseSigma?: number;
}

/** The default layers: a raised square (2x background disparity) with a smaller one on it (3x). */
export function defaultDotLayers(width: number, height: number, background: number): DotLayer[] {
  const cx = Math.round(width / 2);
  const cy = Math.round(height / 2);
  const a = Math.round(Math.min(width, height) * 0.3);
  const b = Math.round(a * 0.45);
  return [
    { x0: cx - a, x1: cx + a, y0: cy - a, y1: cy + a, disparity: 2 * background },
    { x0: cx - b + Math.round(a / 3), x1: cx + b + Math.round(a / 3), y0: cy - b, y1: cy + b, disparity: 3 * background },
  ];
}

/** The layers as typed arrays, nearest first, so the first layer that contains a point is the visible one. */
function layerTable(layers: readonly DotLayer[], seed: number) {
  const order = layers.map((_, i) => i).sort((a, b) => layers[b].disparity - layers[a].disparity || b - a);
  const nl = layers.length;
  const t = {
    lx0: new Float64Array(nl),
    lx1: new Float64Array(nl),
    ly0: new Float64Array(nl),
    ly1: new Float64Array(nl),
    ld: new Int32Array(nl),
    lseed: new Uint32Array(nl),
  };
  order.forEach((li, k) => {
    const l = layers[li];
    t.lx0[k] = l.x0;
    t.lx1[k] = l.x1;
    t.ly0[k] = l.y0;
    t.ly1[k] = l.y1;
    t.ld[k] = l.disparity;
    t.lseed[k] = subSeed(seed >>> 0, 20 + li);
  });
  return t;
}

/** A random-dot stereo pair with exact truth and occlusion (gray, 8 bit). */
export function randomDotPair(opts: RandomDotOptions): StereoRender {
  const W = opts.width;
  const H = opts.height;
  if (!(Number.isInteger(W) && W > 0 && Number.isInteger(H) && H > 0)) {
    throw new UsageError('width/height', `image size must be positive integers, got ${W}x${H}`);
  }
  const bg = opts.background ?? Math.max(1, Math.round(W / 60));
  const front = opts.layers ?? defaultDotLayers(W, H, bg);
  const layers: DotLayer[] = [{ x0: -Infinity, x1: Infinity, y0: -Infinity, y1: Infinity, disparity: bg }, ...front];
  for (const l of layers) {
    if (!Number.isInteger(l.disparity)) throw new UsageError('layers', `dot layer disparities must be integers, got ${l.disparity}`);
  }
  const { lx0, lx1, ly0, ly1, ld, lseed } = layerTable(layers, opts.seed);
  const nl = layers.length;
  const density = opts.density ?? 0.5;
  const [dark, bright] = opts.levels ?? [40, 215];
  const threshold = Math.floor(density * 4294967296);
  const left = new Uint8Array(W * H);
  const right = new Uint8Array(W * H);
  const truth = new Float32Array(W * H);
  const occlusion = new Uint8Array(W * H);
  const layerAt = new Int32Array(W);
  for (let y = 0; y < H; y++) {
    // Left view: nearest layer containing (x, y).
    for (let x = 0; x < W; x++) {
      let k = 0;
      while (!(x >= lx0[k] && x < lx1[k] && y >= ly0[k] && y < ly1[k])) k++;
      layerAt[x] = k;
      const i = y * W + x;
      left[i] = hash32(x, y, 0, lseed[k]) < threshold ? bright : dark;
      truth[i] = ld[k];
    }
    // Right view: nearest layer M whose footprint contains x + d_M.
    for (let x = 0; x < W; x++) {
      let k = 0;
      for (; k < nl; k++) {
        const u = x + ld[k];
        if (u >= lx0[k] && u < lx1[k] && y >= ly0[k] && y < ly1[k]) break;
      }
      right[y * W + x] = hash32(x + ld[k], y, 0, lseed[k]) < threshold ? bright : dark;
    }
    // Occlusion: left pixel x on layer L lands at xr = x - d_L.
    for (let x = 0; x < W; x++) {
      const L = layerAt[x];
      const xr = x - ld[L];
      if (xr < 0) {
        occlusion[y * W + x] = 1;
        continue;
      }
      let k = 0;
      for (; k < nl; k++) {
        const u = xr + ld[k];
        if (u >= lx0[k] && u < lx1[k] && y >= ly0[k] && y < ly1[k]) break;
      }
      if (k !== L) occlusion[y * W + x] = 1;
    }
  }
  const sigma = opts.noiseSigma ?? 0;
  if (sigma > 0) {
    addNoise(left, sigma, subSeed(opts.seed >>> 0, 30));
    addNoise(right, sigma, subSeed(opts.seed >>> 0, 31));
  }
  const img = (data: Uint8Array): RasterImage => ({ width: W, height: H, channels: 1, bitDepth: 8, data });
  return {
    width: W,
    height: H,
    left: img(left),
    right: img(right),
    truth,
    occlusion,
    // A nominal camera so depth figures are defined: Z = f * B / d.
    camera: { focalPx: W, baselineM: 0.1, cxShiftPx: 0 },
  };
}

/** Add seeded Gaussian noise (Marsaglia polar method) in place, rounding and clamping to 0-255. */
function addNoise(data: Uint8Array, sigma: number, seed: number): void {
  let state = seed >>> 0;
  const polar = new Float64Array(3);
  for (let i = 0; i < data.length; i += 2) {
    state = polarDraw(state, polar);
    const a = polar[0];
    const b = polar[1];
    const k = polar[2] * sigma;
    const v0 = Math.round(data[i] + a * k);
    data[i] = v0 < 0 ? 0 : v0 > 255 ? 255 : v0;
    if (i + 1 < data.length) {
      const v1 = Math.round(data[i + 1] + b * k);
      data[i + 1] = v1 < 0 ? 0 : v1 > 255 ? 255 : v1;
    }
  }
}
