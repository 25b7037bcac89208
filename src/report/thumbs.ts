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
import { colorTable } from './colormaps.js';
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

/** Is (x, y) on a dark stripe of the hatch (45 degree stripes, period 4 px)? */
function hatchDark(x: number, y: number): boolean {
  return ((x + y) & 3) < 2;
}

/** Box-average a raster by an integer factor to 8-bit gray (1 channel in) or RGB (3 or 4 in). */
export function downscaleRaster(img: RasterImage, f: number): RasterImage {
  const { width, height, channels, data } = img;
  const outC = channels <= 2 ? 1 : 3;
  const w = Math.ceil(width / f);
  const h = Math.ceil(height / f);
  const sum = new Float64Array(w * h * outC);
  const cnt = new Uint32Array(w * h);
  const k = img.bitDepth === 16 ? 1 / 257 : 1;
  for (let y = 0; y < height; y++) {
    const orow = Math.floor(y / f) * w;
    for (let x = 0; x < width; x++) {
      const o = orow + Math.floor(x / f);
      const i = (y * width + x) * channels;
      for (let c = 0; c < outC; c++) sum[o * outC + c] += data[i + c]!;
      cnt[o]++;
    }
  }
  const out = new Uint8Array(w * h * outC);
  for (let o = 0; o < w * h; o++) for (let c = 0; c < outC; c++) out[o * outC + c] = Math.round((sum[o * outC + c]! / cnt[o]!) * k);
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
      out[ty * w + tx] = src.data[sy * src.width + sx]!;
    }
  }
  return { width: w, height: h, data: out };
}

/** Region bits sampled at the centre of each thumbnail block. */
export function regionsToThumb(bits: Uint8Array, width: number, height: number, f: number): Uint8Array {
  const w = Math.ceil(width / f);
  const h = Math.ceil(height / f);
  const out = new Uint8Array(w * h);
  for (let ty = 0; ty < h; ty++) {
    const cy = Math.min(height - 1, ty * f + (f >> 1));
    for (let tx = 0; tx < w; tx++) out[ty * w + tx] = bits[cy * width + Math.min(width - 1, tx * f + (f >> 1))]!;
  }
  return out;
}

/** Finite min and max of an image (NaN, NaN when none). */
export function finiteRange(d: Float32Array): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < d.length; i++) {
    const v = d[i]!;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return lo <= hi ? [lo, hi] : [NaN, NaN];
}

/** Colour-map levels in the indexed thumbnails (a 64-step map is smooth at thumbnail size). */
export const MAP_LEVELS = 64;
const IDX_HATCH_DARK = MAP_LEVELS;
const IDX_HATCH_LIGHT = MAP_LEVELS + 1;
const IDX_NO_TRUTH = MAP_LEVELS + 2;

function mapPalette(name: 'viridis' | 'magma'): Uint8Array {
  const lut = colorTable(name);
  const pal = new Uint8Array((MAP_LEVELS + 3) * 3);
  for (let i = 0; i < MAP_LEVELS; i++) {
    const l = Math.round((i / (MAP_LEVELS - 1)) * 255) * 3;
    pal[i * 3] = lut[l]!;
    pal[i * 3 + 1] = lut[l + 1]!;
    pal[i * 3 + 2] = lut[l + 2]!;
  }
  pal.set(HATCH_DARK, IDX_HATCH_DARK * 3);
  pal.set(HATCH_LIGHT, IDX_HATCH_LIGHT * 3);
  pal.set(NO_TRUTH, IDX_NO_TRUTH * 3);
  return pal;
}
const VIRIDIS_PALETTE = mapPalette('viridis');
const MAGMA_PALETTE = mapPalette('magma');

/** Disparity in viridis on the shared scale [lo, hi] (clamped); invalid pixels hatched. */
export function colorizeDisparity(d: FloatImage, lo: number, hi: number): IndexedImage {
  const { width, height, data } = d;
  const index = new Uint8Array(width * height);
  const span = hi > lo ? hi - lo : 1;
  const top = MAP_LEVELS - 1;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = y * width + x;
      const v = data[i]!;
      if (v - v !== 0) {
        index[i] = hatchDark(x, y) ? IDX_HATCH_DARK : IDX_HATCH_LIGHT;
        continue;
      }
      let t = (v - lo) / span;
      t = t < 0 ? 0 : t > 1 ? 1 : t;
      index[i] = Math.round(t * top);
    }
  }
  return { width, height, index, palette: VIRIDIS_PALETTE };
}

/**
 * |pred - truth| in magma, linear from 0 to `clip` px (clipped above); hatched where there
 * is truth but no prediction; flat grey where there is no truth.
 */
export function colorizeError(pred: FloatImage, truth: FloatImage, clip = ERROR_CLIP_PX): IndexedImage {
  const { width, height } = truth;
  const index = new Uint8Array(width * height);
  const top = MAP_LEVELS - 1;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = y * width + x;
      const t = truth.data[i]!;
      const p = pred.data[i]!;
      if (t - t !== 0) index[i] = IDX_NO_TRUTH;
      else if (p - p !== 0) index[i] = hatchDark(x, y) ? IDX_HATCH_DARK : IDX_HATCH_LIGHT;
      else {
        const s = Math.abs(p - t) / clip;
        index[i] = Math.round((s > 1 ? 1 : s) * top);
      }
    }
  }
  return { width, height, index, palette: MAGMA_PALETTE };
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
    const b = bits[i]!;
    index[i] =
      (b & REGION_BIT.known) === 0 ? 0 : b & REGION_BIT.jump ? 4 : b & REGION_BIT.flat ? 3 : b & REGION_BIT.occluded ? 2 : 1;
  }
  return { width, height, index, palette: REGION_PALETTE };
}
