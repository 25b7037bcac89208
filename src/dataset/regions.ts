/**
 * Evaluation regions of one pair (bits of REGION_BIT, see src/core/regions.ts).
 *
 * Definitions and every choice behind them (parameters in RegionParams):
 *
 * - known    = truth finite (NaN and +-Infinity are unknown).
 * - occluded = known and not visible in the right view. With an occlusion mask, a
 *              non-zero mask byte means occluded; without one the mask is derived from
 *              the truth by deriveOcclusion(truth, w, h, occlusionTol, occlusionTau),
 *              whose "outside the right frame" pixels count as occluded too.
 * - visible  = known and not occluded.
 * - flat     = visible and low texture: the mean over a flatWindow x flatWindow box of
 *              the squared horizontal gradient of the left luminance is strictly below
 *              flatThreshold (0-255 intensity units squared). After the textureless
 *              regions of Scharstein & Szeliski (2002, IJCV 47, "A taxonomy and
 *              evaluation of dense two-frame stereo correspondence algorithms"), which
 *              average the squared horizontal gradient over a box window.
 *              Choices: gradient = central difference (I[x+1] - I[x-1]) / 2; at the left
 *              and right image edges the image is extended by replicating the edge pixel
 *              (so g = (I[1] - I[0]) / 2 at x = 0). The box mean also replicates the edge
 *              rows/columns of the squared-gradient image (the window always averages
 *              flatWindow^2 samples; this equals scipy.ndimage.uniform_filter with
 *              mode='nearest'). Texture is a property of the image, so the gradient uses
 *              every pixel, known truth or not. Box sums are running sums in float64,
 *              separable (rows, then columns): O(1) per pixel whatever the window.
 * - jump     = visible and within Chebyshev distance jumpRadius (a square of side
 *              2 * jumpRadius + 1) of a jump pixel. A jump pixel is a pixel with known
 *              truth that has a 4-neighbour with known truth whose disparity differs by
 *              strictly more than jumpGap px; both pixels of such a neighbour pair are jump
 *              pixels. Unknown truth next to known truth is not a jump (nothing is known
 *              about the difference). The dilation is separable (rows, then columns), each
 *              pass O(1) per pixel via the distance to the nearest jump pixel.
 *
 * - ignore     = a mask whose non-zero pixels are in no region at all.
 * - named regions (the manifest's `masks`, bits after the built-ins) = region pixels
 *              (known, not ignored) where their mask is non-zero.
 * - sparse truth: jump and the derived occlusion use the truth filled by each pixel's
 *              nearest known sample (sparse.ts); the derived occlusion is then widened
 *              by SPARSE_OCCLUSION_REACH_PX along its rows. Regions keep known pixels only.
 * - with a camera, every region pixel with a true depth gets its band (of bandEdges,
 *              lo <= Z < hi) and its fine depth bin floor(12 log2 Z).
 *
 * All inputs are flat row-major arrays of width * height values.
 */
import { NO_DEPTH_BIN, REGION_BIT, REGION_IDS, type RegionMap, type RegionParams } from '../core/regions.js';
import type { LoadedPair } from '../core/pair.js';
import { DEFAULT_DEPTH_EPS, type Camera } from '../core/camera.js';
import { UsageError } from '../core/errors.js';
import { PROFILE_BINS_PER_OCTAVE, bandIndexOf, bandLabels } from '../core/depth-bands.js';
import { deriveOcclusion } from './occlusion.js';
import { nearestFill } from './sparse.js';

/** What the regions of one pair are built from (flat row-major arrays of width * height). */
export interface RegionInput {
  readonly truth: Float32Array;
  readonly leftGray: Float32Array;
  readonly width: number;
  readonly height: number;
  /** Non-zero = occluded; derived from the truth when absent. */
  readonly occlusion?: Uint8Array | undefined;
  /** Non-zero = ignored: such pixels leave every region. */
  readonly ignore?: Uint8Array | undefined;
  /** The user's named regions in bit order after the built-ins; a null mask = none in this pair. */
  readonly masks?: readonly { readonly name: string; readonly data: Uint8Array | null }[] | undefined;
  /** Sparse truth: jump and occlusion are derived from the truth filled by its nearest known sample. */
  readonly sparse?: boolean | undefined;
  /** With a camera, the true depth gives each pixel its band (of `bandEdges`) and fine depth bin. */
  readonly camera?: Camera | undefined;
  readonly bandEdges?: readonly number[] | undefined;
  /** Truth with d + cxShiftPx <= this (px) has no true depth (default DEFAULT_DEPTH_EPS). */
  readonly depthEps?: number | undefined;
}


/**
 * A derived occlusion of sparse truth is widened by this many px along its rows: the
 * filled surfaces' borders, and so the occluded strips' ends, are uncertain by about half
 * a sample spacing. Measured on rendered dock scenes with 10 % of the truth kept: 1 px
 * finds 83-98 % of the dense occluded pixels (0.71-0.97 without), 2 px costs too much
 * precision (33-65 % of the widened region truly occluded).
 */
export const SPARSE_OCCLUSION_REACH_PX = 1;

/** A mask widened by `reach` px to the left and right along each row. */
function widenRows(mask: Uint8Array, width: number, reach: number): Uint8Array {
  if (reach <= 0) return mask;
  const out = new Uint8Array(mask.length);
  for (let row = 0; row < mask.length; row += width) {
    let last = -Infinity;
    for (let x = 0; x < width; x++) {
      if (mask[row + x]) last = x;
      if (x - last <= reach) out[row + x] = 1;
    }
    let next = Infinity;
    for (let x = width - 1; x >= 0; x--) {
      if (mask[row + x]) next = x;
      if (next - x <= reach) out[row + x] = 1;
    }
  }
  return out;
}

/** The regions of one pair (see the file comment for every definition). */
export function buildRegions(input: RegionInput, params: RegionParams): RegionMap {
  const { truth, leftGray, width, height } = input;
  const n = width * height;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width <= 0 || height <= 0) {
    throw new RangeError(`buildRegions: bad size ${width}x${height}`);
  }
  const sized = (a: { length: number } | null | undefined): boolean => a === undefined || a === null || a.length === n;
  if (truth.length !== n || leftGray.length !== n || !sized(input.occlusion) || !sized(input.ignore) || !(input.masks ?? []).every((m) => sized(m.data))) {
    throw new RangeError(`buildRegions: array sizes do not match ${width}x${height}`);
  }
  checkRegionParams(params);
  const masks = input.masks ?? [];
  if (REGION_IDS.length + masks.length > 16) throw new RangeError(`buildRegions: ${masks.length} named regions, at most ${16 - REGION_IDS.length}`);

  // Sparse truth: the shape of the scene (jumps, occluders) from the nearest known sample.
  const shape = input.sparse ? nearestFill(truth, width, height) : truth;
  const occ = input.occlusion ?? (input.sparse ? widenRows(deriveOcclusion(shape, width, height, params.occlusionTol, params.occlusionTau), width, SPARSE_OCCLUSION_REACH_PX) : deriveOcclusion(shape, width, height, params.occlusionTol, params.occlusionTau));
  const flat = flatMask(leftGray, width, height, params.flatWindow, params.flatThreshold);
  const jump = jumpMask(shape, width, height, params.jumpGap, params.jumpRadius);

  const VIS = REGION_BIT.known | REGION_BIT.visible;
  const OCC = REGION_BIT.known | REGION_BIT.occluded;
  const FLAT = REGION_BIT.flat;
  const JUMP = REGION_BIT.jump;
  const ignore = input.ignore;
  const bits = new Uint16Array(n);
  for (let i = 0; i < n; i++) {
    const d = truth[i];
    if (!(d - d === 0)) continue; // NaN or infinite: unknown
    if (ignore !== undefined && ignore[i] !== 0) continue;
    if (occ[i] !== 0) {
      bits[i] = OCC;
    } else {
      bits[i] = VIS | (flat[i] !== 0 ? FLAT : 0) | (jump[i] !== 0 ? JUMP : 0);
    }
  }
  masks.forEach((m, k) => {
    if (m.data === null) return;
    const bit = 1 << (REGION_IDS.length + k);
    const data = m.data;
    for (let i = 0; i < n; i++) if (bits[i] !== 0 && data[i] !== 0) bits[i] |= bit;
  });
  const names = [...REGION_IDS, ...masks.map((m) => m.name)];
  if (!input.camera) return { width, height, bits, names, band: null, bands: [], zbin: null };
  const depth = depthLayers(truth, bits, input.camera, input.bandEdges ?? [], input.depthEps ?? DEFAULT_DEPTH_EPS);
  return { width, height, bits, names, ...depth };
}

/**
 * Band index and fine depth bin of every pixel in a region, from its true depth
 * Z = fB / (d + cxShift) (none where d + cxShift <= eps).
 */
function depthLayers(truth: Float32Array, bits: Uint16Array, cam: Camera, edges: readonly number[], eps: number): Pick<RegionMap, 'band' | 'bands' | 'zbin'> {
  const n = truth.length;
  const fb = cam.focalPx * cam.baselineM;
  const shift = cam.cxShiftPx;
  const band = edges.length ? new Uint8Array(n) : null;
  const zbin = new Int16Array(n).fill(NO_DEPTH_BIN);
  for (let i = 0; i < n; i++) {
    if (bits[i] === 0) continue;
    const dt = truth[i] + shift;
    if (!(dt > eps)) continue;
    const z = fb / dt;
    if (band !== null) band[i] = bandIndexOf(z, edges);
    const k = Math.floor(PROFILE_BINS_PER_OCTAVE * Math.log2(z));
    zbin[i] = k < -32767 ? -32767 : k > 32767 ? 32767 : k;
  }
  return { band, bands: bandLabels(edges), zbin };
}

/** Regions of a loaded pair: the manifest's masks, or ones derived from the truth; bands with a camera. */
export function pairRegions(pair: LoadedPair, p: { regions: RegionParams; depthBands?: readonly number[] }): RegionMap {
  return buildRegions(
    {
      truth: pair.truth.data,
      leftGray: pair.leftGray,
      width: pair.width,
      height: pair.height,
      occlusion: pair.occlusion,
      ignore: pair.ignore,
      masks: pair.masks,
      sparse: pair.sparseTruth,
      camera: pair.camera,
      bandEdges: p.depthBands,
    },
    p.regions,
  );
}

export function checkRegionParams(p: RegionParams): void {
  if (!(Number.isInteger(p.flatWindow) && p.flatWindow >= 1 && p.flatWindow % 2 === 1)) {
    throw new UsageError('regions.flatWindow', `must be an odd positive integer, got ${p.flatWindow}`);
  }
  if (!(p.flatThreshold >= 0) || !Number.isFinite(p.flatThreshold)) {
    throw new UsageError('regions.flatThreshold', `must be a finite number >= 0, got ${p.flatThreshold}`);
  }
  if (!(p.jumpGap >= 0) || !Number.isFinite(p.jumpGap)) {
    throw new UsageError('regions.jumpGap', `must be a finite number >= 0, got ${p.jumpGap}`);
  }
  if (!(Number.isInteger(p.jumpRadius) && p.jumpRadius >= 0)) {
    throw new UsageError('regions.jumpRadius', `must be an integer >= 0, got ${p.jumpRadius}`);
  }
  if (!Number.isFinite(p.occlusionTol)) {
    throw new UsageError('regions.occlusionTol', `must be a finite number, got ${p.occlusionTol}`);
  }
  if (!Number.isFinite(p.occlusionTau)) {
    throw new UsageError('regions.occlusionTau', `must be a finite number, got ${p.occlusionTau}`);
  }
}

/**
 * Mean over a window x window box (edge-replicated) of the squared central-difference
 * horizontal gradient (edge-replicated), float64, row-major. See the file comment.
 */
export function textureEnergy(gray: Float32Array, width: number, height: number, window: number): Float64Array {
  const out = new Float64Array(width * height);
  forEachWindowMean(gray, width, height, window, (i, mean) => (out[i] = mean));
  return out;
}

/** 1 where textureEnergy < threshold (strict), else 0; computed without storing the energy. */
export function flatMask(gray: Float32Array, width: number, height: number, window: number, threshold: number): Uint8Array {
  const out = new Uint8Array(width * height);
  forEachWindowMean(gray, width, height, window, (i, mean) => (out[i] = mean < threshold ? 1 : 0));
  return out;
}

/** Calls visit(pixel index, window mean of the squared gradient) for every pixel, row by row. */
function forEachWindowMean(
  gray: Float32Array,
  width: number,
  height: number,
  window: number,
  visit: (index: number, mean: number) => void,
): void {
  const h = rowBoxSums(gray, width, height, window);
  const r = (window - 1) >> 1;
  const inv = 1 / (window * window);
  const s = firstColumnSums(h, width, height, r);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) visit(row + x, s[x] * inv);
    nextColumnSums(h, width, height, r, y, s);
  }
}

/**
 * Horizontal box sums (edge-replicated, window wide) of the squared central-difference
 * gradient (edge-replicated), row by row; the squared gradient of a row lives in a
 * row buffer only.
 */
function rowBoxSums(gray: Float32Array, width: number, height: number, window: number): Float64Array {
  const r = (window - 1) >> 1;
  const out = new Float64Array(width * height);
  const g2 = new Float64Array(width);
  const wm1 = width - 1;
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const g = (gray[row + (x < wm1 ? x + 1 : wm1)] - gray[row + (x > 0 ? x - 1 : 0)]) / 2;
      g2[x] = g * g;
    }
    let s = 0;
    for (let j = -r; j <= r; j++) s += g2[j < 0 ? 0 : j > wm1 ? wm1 : j];
    for (let x = 0; x < width; x++) {
      out[row + x] = s;
      const add = x + r + 1;
      const sub = x - r;
      s += g2[add > wm1 ? wm1 : add] - g2[sub < 0 ? 0 : sub];
    }
  }
  return out;
}

/**
 * Vertical box pass over row sums `h` (edge-replicated rows), radius r: the column sums
 * s[x] of the window centred on row 0.
 */
function firstColumnSums(h: Float64Array, width: number, height: number, r: number): Float64Array {
  const s = new Float64Array(width);
  const hm1 = height - 1;
  for (let j = -r; j <= r; j++) {
    const row = (j < 0 ? 0 : j > hm1 ? hm1 : j) * width;
    for (let x = 0; x < width; x++) s[x] += h[row + x];
  }
  return s;
}

/** Slides the column sums `s` from the window centred on row y to the one on row y + 1. */
function nextColumnSums(h: Float64Array, width: number, height: number, r: number, y: number, s: Float64Array): void {
  const hm1 = height - 1;
  const addRow = (y + r + 1 > hm1 ? hm1 : y + r + 1) * width;
  const subRow = (y - r < 0 ? 0 : y - r) * width;
  for (let x = 0; x < width; x++) s[x] += h[addRow + x] - h[subRow + x];
}

/**
 * 1 within Chebyshev distance `radius` of a jump pixel (a known-truth pixel with a
 * known-truth 4-neighbour differing by more than `gap`), else 0. See the file comment.
 */
export function jumpMask(truth: Float32Array, width: number, height: number, gap: number, radius: number): Uint8Array {
  const n = width * height;
  const src = new Uint8Array(n);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const i = row + x;
      const d = truth[i];
      if (!(d - d === 0)) continue;
      if (x + 1 < width) {
        const e = truth[i + 1];
        if (e - e === 0 && Math.abs(d - e) > gap) {
          src[i] = 1;
          src[i + 1] = 1;
        }
      }
      if (y + 1 < height) {
        const e = truth[i + width];
        if (e - e === 0 && Math.abs(d - e) > gap) {
          src[i] = 1;
          src[i + width] = 1;
        }
      }
    }
  }
  if (radius === 0) return src;
  radius = Math.min(radius, width + height); // larger radii cover the same pixels; keeps ints small
  // Rows: mark x when a source lies in [x - radius, x + radius].
  const tmp = new Uint8Array(n);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    let last = -(radius + 1); // latest source at or left of x (none yet: out of reach)
    for (let x = 0; x < width; x++) {
      if (src[row + x]) last = x;
      if (x - last <= radius) tmp[row + x] = 1;
    }
    let next = width + radius + 1; // nearest source at or right of x (none yet)
    for (let x = width - 1; x >= 0; x--) {
      if (src[row + x]) next = x;
      if (next - x <= radius) tmp[row + x] = 1;
    }
  }
  // Columns, all at once with per-column trackers.
  const out = new Uint8Array(n);
  const track = new Int32Array(width);
  track.fill(-(radius + 1)); // no source seen yet: farther than the radius
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      if (tmp[row + x]) track[x] = y;
      if (y - track[x] <= radius) out[row + x] = 1;
    }
  }
  track.fill(height + radius + 1);
  for (let y = height - 1; y >= 0; y--) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      if (tmp[row + x]) track[x] = y;
      if (track[x] - y <= radius) out[row + x] = 1;
    }
  }
  return out;
}
