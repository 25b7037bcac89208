/**
 * Thumbnails for the HTML report: small RGB rasters made from full-size images,
 * previews and region maps, coloured with the report's maps. Pure functions over
 * typed arrays; every output is 8-bit.
 *
 * Invalid pixels (no prediction where truth is known) are hatched with diagonal
 * stripes; pixels without truth are a flat neutral grey.
 */
import type { FloatImage, RasterImage } from '../core/image.js';
import { REGION_BIT } from '../core/regions.js';
import { colorTable, ERROR_MAP, type ColorMapName, type DisparityMapName } from './colormaps.js';
import type { IndexedImage } from './png-palette.js';

/** Thumbnails are at most this wide. */
export const THUMB_MAX_WIDTH = 128;
/** Absolute error at or above this many px gets the brightest error colour. */
export const ERROR_CLIP_PX = 4;

export const HATCH_DARK: readonly [number, number, number] = [96, 96, 96];
export const HATCH_LIGHT: readonly [number, number, number] = [236, 236, 236];
export const NO_TRUTH: readonly [number, number, number] = [150, 158, 166];

/** Region map colours (Okabe & Ito 2008 palette): no truth, visible, occluded, flat, jump. */
export const REGION_COLORS = {
  unknown: [40, 40, 40],
  visible: [225, 225, 225],
  occluded: [230, 159, 0],
  flat: [86, 180, 233],
  jump: [204, 121, 167],
} as const;

export function thumbFactor(width: number, maxWidth = THUMB_MAX_WIDTH): number {
  return Math.max(1, Math.ceil(width / maxWidth));
}

/** Box-average a raster by an integer factor to 8-bit gray (1 channel in) or RGB (3 or 4 in). */
export function downscaleRaster(img: RasterImage, f: number): RasterImage {
  const { width, height, channels, data } = img;
  const outC = channels <= 2 ? 1 : 3;
  const w = Math.ceil(width / f);
  const h = Math.ceil(height / f);
  const out = new Uint8Array(w * h * outC);
  const k = img.bitDepth === 16 ? 1 / 257 : 1;
  // Output column of every input column, and the width of every output block.
  const col = new Int32Array(width);
  for (let x = 0; x < width; x++) col[x] = ((x / f) | 0) * outC;
  const bw = new Int32Array(w);
  for (let ox = 0; ox < w; ox++) bw[ox] = Math.min(width, (ox + 1) * f) - ox * f;
  // One output row of sums at a time, filled in input row-major order.
  const sum = new Float64Array(w * outC);
  for (let oy = 0; oy < h; oy++) {
    sum.fill(0);
    const y0 = oy * f;
    const y1 = Math.min(height, y0 + f);
    for (let y = y0; y < y1; y++) {
      let i = y * width * channels;
      if (outC === 1) {
        for (let x = 0; x < width; x++, i += channels) sum[col[x]] += data[i];
      } else {
        for (let x = 0; x < width; x++, i += channels) {
          const o = col[x];
          sum[o] += data[i];
          sum[o + 1] += data[i + 1];
          sum[o + 2] += data[i + 2];
        }
      }
    }
    const rows = y1 - y0;
    const base = oy * w * outC;
    for (let ox = 0; ox < w; ox++) {
      const n = rows * bw[ox];
      for (let c = 0; c < outC; c++) out[base + ox * outC + c] = Math.round((sum[ox * outC + c] / n) * k);
    }
  }
  return { width: w, height: h, channels: outC as 1 | 3, bitDepth: 8, data: out };
}

/**
 * Nearest sampling of a float image stored at `srcFactor` reduction onto the thumbnail
 * grid of a full-size width x height image reduced by `f`.
 */
export function toThumbGrid(src: FloatImage, srcFactor: number, width: number, height: number, f: number): FloatImage {
  const w = Math.ceil(width / f);
  const h = Math.ceil(height / f);
  const out = new Float32Array(w * h);
  for (let ty = 0; ty < h; ty++) {
    const cy = Math.min(height - 1, ty * f + (f >> 1));
    const sy = Math.min(src.height - 1, Math.floor(cy / srcFactor));
    for (let tx = 0; tx < w; tx++) {
      const cx = Math.min(width - 1, tx * f + (f >> 1));
      const sx = Math.min(src.width - 1, Math.floor(cx / srcFactor));
      out[ty * w + tx] = src.data[sy * src.width + sx];
    }
  }
  return { width: w, height: h, data: out };
}

/**
 * The thumbnail grid of a full-size float image as the report shows it: each thumbnail
 * pixel is the NaN-aware mean of the `pf` x `pf` block (of the preview grid) that holds
 * the thumbnail block's centre pixel. Equal, value for value, to
 * `toThumbGrid(downscaleNanMean(img, pf), pf, width, height, f)` (same sums in the same
 * order), but reads only the blocks the thumbnail samples.
 */
export function blockMeanThumb(img: FloatImage, pf: number, f: number): FloatImage {
  const { width, height, data } = img;
  const pw = Math.ceil(width / pf);
  const ph = Math.ceil(height / pf);
  const w = Math.ceil(width / f);
  const h = Math.ceil(height / f);
  const out = new Float32Array(w * h);
  // Block start column of each thumbnail column (the same for every row).
  const x0s = new Int32Array(w);
  for (let tx = 0; tx < w; tx++) x0s[tx] = Math.min(pw - 1, Math.floor(Math.min(width - 1, tx * f + (f >> 1)) / pf)) * pf;
  for (let ty = 0; ty < h; ty++) {
    const y0 = Math.min(ph - 1, Math.floor(Math.min(height - 1, ty * f + (f >> 1)) / pf)) * pf;
    const y1 = Math.min(height, y0 + pf);
    for (let tx = 0; tx < w; tx++) {
      const x0 = x0s[tx];
      const x1 = Math.min(width, x0 + pf);
      let sum = 0;
      let cnt = 0;
      for (let y = y0; y < y1; y++) {
        const row = y * width;
        for (let x = x0; x < x1; x++) {
          const v = data[row + x];
          if (v - v !== 0) continue;
          sum += v;
          cnt++;
        }
      }
      out[ty * w + tx] = cnt > 0 ? sum / cnt : NaN;
    }
  }
  return { width: w, height: h, data: out };
}

/** Region bits sampled at the centre of each thumbnail block. */
export function regionsToThumb(bits: Uint8Array | Uint16Array, width: number, height: number, f: number): Uint8Array {
  const w = Math.ceil(width / f);
  const h = Math.ceil(height / f);
  const out = new Uint8Array(w * h);
  for (let ty = 0; ty < h; ty++) {
    const cy = Math.min(height - 1, ty * f + (f >> 1));
    for (let tx = 0; tx < w; tx++) out[ty * w + tx] = bits[cy * width + Math.min(width - 1, tx * f + (f >> 1))] & 0xff; // the built-in regions
  }
  return out;
}

/** Finite min and max of an image (NaN, NaN when none). */
export function finiteRange(d: Float32Array): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < d.length; i++) {
    const v = d[i];
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return lo <= hi ? [lo, hi] : [NaN, NaN];
}

/** Colour-map levels in the indexed thumbnails (a 64-step map is smooth at thumbnail size). */
export const MAP_LEVELS = 64;
/** Hatch of invalid pixels: 45 degree stripes, period 4 px; (x, y) is on a dark stripe when ((x + y) & 3) < 2. */
const IDX_HATCH_DARK = MAP_LEVELS;
const IDX_HATCH_LIGHT = MAP_LEVELS + 1;
const IDX_NO_TRUTH = MAP_LEVELS + 2;

function mapPalette(name: ColorMapName): Uint8Array {
  const lut = colorTable(name);
  const pal = new Uint8Array((MAP_LEVELS + 3) * 3);
  for (let i = 0; i < MAP_LEVELS; i++) {
    const l = Math.round((i / (MAP_LEVELS - 1)) * 255) * 3;
    pal[i * 3] = lut[l];
    pal[i * 3 + 1] = lut[l + 1];
    pal[i * 3 + 2] = lut[l + 2];
  }
  pal.set(HATCH_DARK, IDX_HATCH_DARK * 3);
  pal.set(HATCH_LIGHT, IDX_HATCH_LIGHT * 3);
  pal.set(NO_TRUTH, IDX_NO_TRUTH * 3);
  return pal;
}
const PALETTES: Record<ColorMapName, Uint8Array> = {
  viridis: mapPalette('viridis'),
  cividis: mapPalette('cividis'),
  magma: mapPalette('magma'),
};

/**
 * Disparity in viridis (or cividis) on the shared scale [lo, hi] (clamped). Invalid
 * pixels are hatched (a matcher output: no prediction), or flat grey with
 * `invalid: 'no-truth'` (the truth itself: no truth there).
 */
export function colorizeDisparity(d: FloatImage, lo: number, hi: number, map: DisparityMapName = 'viridis', invalid: 'hatch' | 'no-truth' = 'hatch'): IndexedImage {
  const { width, height, data } = d;
  const index = new Uint8Array(width * height);
  // Level = round(t * top) with t = (v - lo) / span clamped to [0, 1]; t >= 0, so
  // round(u) = floor(u + 0.5) (the `| 0` truncation of a non-negative number).
  const k = (MAP_LEVELS - 1) / (hi > lo ? hi - lo : 1);
  const top = MAP_LEVELS - 1;
  const flat = invalid === 'no-truth';
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const v = data[row + x];
      if (v - v !== 0) {
        index[row + x] = flat ? IDX_NO_TRUTH : ((x + y) & 3) < 2 ? IDX_HATCH_DARK : IDX_HATCH_LIGHT;
        continue;
      }
      const u = (v - lo) * k;
      index[row + x] = u <= 0 ? 0 : u >= top ? top : (u + 0.5) | 0;
    }
  }
  return { width, height, index, palette: PALETTES[map] };
}

/**
 * |pred - truth| in magma, linear from 0 to `clip` px (clipped above); hatched where there
 * is truth but no prediction; flat grey where there is no truth.
 */
export function colorizeError(pred: FloatImage, truth: FloatImage, clip = ERROR_CLIP_PX): IndexedImage {
  const { width, height } = truth;
  const td = truth.data;
  const pd = pred.data;
  const index = new Uint8Array(width * height);
  const top = MAP_LEVELS - 1;
  const k = top / clip;
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const i = row + x;
      const t = td[i];
      const p = pd[i];
      if (t - t !== 0) index[i] = IDX_NO_TRUTH;
      else if (p - p !== 0) index[i] = ((x + y) & 3) < 2 ? IDX_HATCH_DARK : IDX_HATCH_LIGHT;
      else {
        const e = p > t ? p - t : t - p;
        const u = e * k;
        index[i] = u >= top ? top : (u + 0.5) | 0;
      }
    }
  }
  return { width, height, index, palette: PALETTES[ERROR_MAP] };
}

const REGION_PALETTE = Uint8Array.from([
  ...REGION_COLORS.unknown,
  ...REGION_COLORS.visible,
  ...REGION_COLORS.occluded,
  ...REGION_COLORS.flat,
  ...REGION_COLORS.jump,
]);

/** The region map as one picture: jump over flat over occluded/visible; no truth dark. */
export function colorizeRegions(bits: Uint8Array, width: number, height: number): IndexedImage {
  const index = new Uint8Array(width * height);
  for (let i = 0; i < width * height; i++) {
    const b = bits[i];
    index[i] =
      (b & REGION_BIT.known) === 0 ? 0 : b & REGION_BIT.jump ? 4 : b & REGION_BIT.flat ? 3 : b & REGION_BIT.occluded ? 2 : 1;
  }
  return { width, height, index, palette: REGION_PALETTE };
}
