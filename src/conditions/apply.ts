/**
 * Applying a camera-fault condition to a loaded pair: the images the matchers see
 * change, the files and (except for `scale`) the truth and regions do not. Faults work
 * on each colour channel in floating point on the 0-255 scale (16-bit samples / 257),
 * then the result is rounded and clamped to the image's own bit depth, as a camera
 * would deliver it; the luminance the matchers read is taken from that.
 *
 * - gain, offset, gamma: the right camera's values v -> g v, v + o, 255 (v/255)^g.
 * - noise: one field per camera, added equally to every colour channel (so the
 *   luminance sees exactly the stated sigma): Gaussian with sigma(v)^2 = s^2/2 (1 + v/128),
 *   read noise plus shot noise, s at mid grey; seeded per run seed, dataset, pair, camera.
 * - blur, blur-right: sampled Gaussian (radius ceil(3 sigma)), edges mirrored.
 * - vshift, rotate: the right image warped bilinearly, edges replicated (kernels.ts).
 * - scale: both images area-averaged to round(s W) x round(s H); the truth and masks
 *   sampled at the nearest pixel, disparities multiplied by the width ratio; the camera's
 *   focal length and principal-point shift scaled with it; the disparity range widened
 *   to whole pixels. Pixel figures are then in the smaller image's pixels.
 * - jpeg: each image encoded and decoded by jpeg-js at quality q (8-bit; 16-bit images
 *   are divided by 257 first; alpha dropped).
 */
import jpeg from 'jpeg-js';
import { CLEAN, parseConditionName, type Condition } from './spec.js';
import { areaResample, blurPlane, faultWarp, nearestIndex, noiseField, warpAffinePlane } from './kernels.js';
import { mulberry32, seedFor } from '../core/prng.js';
import { toLuminance, type RasterImage } from '../core/image.js';
import type { LoadedPair } from '../core/pair.js';

/** The default seed of the noise fields (`--condition-seed`). */
export const DEFAULT_CONDITION_SEED = 1;

/** Colour planes of a raster on the 0-255 scale (alpha left out). */
export function planesOf(img: RasterImage): Float32Array[] {
  const n = img.width * img.height;
  const colour = img.channels >= 3 ? 3 : 1;
  const k = img.bitDepth === 16 ? 1 / 257 : 1;
  const planes = Array.from({ length: colour }, () => new Float32Array(n));
  for (let i = 0, j = 0; i < n; i++, j += img.channels) for (let c = 0; c < colour; c++) planes[c][i] = img.data[j + c] * k;
  return planes;
}

/** A raster of the planes, rounded and clamped to `like`'s bit depth; alpha taken from `like` when sizes agree. */
export function rasterOf(planes: readonly Float32Array[], width: number, height: number, like: RasterImage): RasterImage {
  const n = width * height;
  const sameSize = like.width === width && like.height === height;
  const alpha = sameSize && (like.channels === 2 || like.channels === 4);
  const channels = (planes.length + (alpha ? 1 : 0)) as 1 | 2 | 3 | 4;
  const max = like.bitDepth === 16 ? 65535 : 255;
  const k = like.bitDepth === 16 ? 257 : 1;
  const data = like.bitDepth === 16 ? new Uint16Array(n * channels) : new Uint8Array(n * channels);
  for (let i = 0, j = 0; i < n; i++, j += channels) {
    for (let c = 0; c < planes.length; c++) {
      const v = Math.round(planes[c][i] * k);
      data[j + c] = v < 0 ? 0 : v > max ? max : v;
    }
    if (alpha) data[j + planes.length] = like.data[i * like.channels + like.channels - 1];
  }
  return { width, height, channels, bitDepth: like.bitDepth, data };
}

/** Encode and decode one image with jpeg-js at quality q: the 8-bit image a compressed stream delivers. */
export function jpegRoundTrip(img: RasterImage, quality: number): RasterImage {
  const planes = planesOf(img);
  const n = img.width * img.height;
  const rgba = Buffer.alloc(n * 4);
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < 3; c++) rgba[i * 4 + c] = Math.max(0, Math.min(255, Math.round(planes[planes.length === 3 ? c : 0][i])));
    rgba[i * 4 + 3] = 255;
  }
  const coded = jpeg.encode({ width: img.width, height: img.height, data: rgba }, quality);
  const back = jpeg.decode(coded.data, { useTArray: true, formatAsRGBA: true });
  const channels = planes.length === 3 ? 3 : 1;
  const data = new Uint8Array(n * channels);
  for (let i = 0; i < n; i++) for (let c = 0; c < channels; c++) data[i * channels + c] = back.data[i * 4 + c];
  return { width: img.width, height: img.height, channels, bitDepth: 8, data };
}

type PlaneFault = (planes: Float32Array[], w: number, h: number) => Float32Array[];

const perPlane = (f: (p: Float32Array) => Float32Array): PlaneFault => (planes) => planes.map(f);

/** The per-image fault of a condition for one camera; null = that camera is untouched. */
function planeFault(c: Condition, camera: 'left' | 'right', noiseRng: () => number): PlaneFault | null {
  const s = c.strength;
  const rightOnly = (f: PlaneFault): PlaneFault | null => (camera === 'right' ? f : null);
  switch (c.kind) {
    case 'gain':
      return rightOnly(perPlane((p) => p.map((v) => v * s)));
    case 'offset':
      return rightOnly(perPlane((p) => p.map((v) => v + s)));
    case 'gamma':
      return rightOnly(perPlane((p) => p.map((v) => 255 * Math.pow(Math.max(0, v) / 255, s))));
    case 'noise':
      return (planes) => {
        const lum = planes.length === 3 ? planes[0].map((r, i) => 0.299 * r + 0.587 * planes[1][i] + 0.114 * planes[2][i]) : planes[0];
        const field = noiseField(lum, s, noiseRng);
        return planes.map((p) => p.map((v, i) => v + field[i]));
      };
    case 'blur':
      return (planes, w, h) => planes.map((p) => blurPlane(p, w, h, s));
    case 'blur-right':
      return rightOnly((planes, w, h) => planes.map((p) => blurPlane(p, w, h, s)));
    case 'vshift':
      return rightOnly((planes, w, h) => planes.map((p) => warpAffinePlane(p, w, h, faultWarp(w, h, s, 0))));
    case 'rotate':
      return rightOnly((planes, w, h) => planes.map((p) => warpAffinePlane(p, w, h, faultWarp(w, h, 0, s))));
    default:
      throw new Error(`condition kind ${c.kind} has no image fault`);
  }
}

function faultedImage(img: RasterImage, c: Condition, camera: 'left' | 'right', rng: () => number): RasterImage {
  if (c.kind === 'jpeg') return jpegRoundTrip(img, c.strength);
  const f = planeFault(c, camera, rng);
  if (!f) return img;
  return rasterOf(f(planesOf(img), img.width, img.height), img.width, img.height, img);
}

/** The pair at a lower resolution: images area-averaged, truth and masks nearest, disparities and camera scaled. */
export function scaledPair(pair: LoadedPair, s: number): LoadedPair {
  const w2 = Math.max(1, Math.round(pair.width * s));
  const h2 = Math.max(1, Math.round(pair.height * s));
  const sx = w2 / pair.width;
  const image = (img: RasterImage): RasterImage => rasterOf(planesOf(img).map((p) => areaResample(p, img.width, img.height, w2, h2)), w2, h2, img);
  const idx = nearestIndex(pair.width, pair.height, w2, h2);
  const mask = (m: Uint8Array | undefined): Uint8Array | undefined => (m ? Uint8Array.from(idx, (i) => m[i]) : undefined);
  const truth = Float32Array.from(idx, (i) => pair.truth.data[i] * sx);
  const left = image(pair.left);
  const right = image(pair.right);
  const cam = pair.camera;
  return {
    ...pair,
    width: w2,
    height: h2,
    left,
    right,
    leftGray: toLuminance(left),
    rightGray: toLuminance(right),
    truth: { width: w2, height: h2, data: truth },
    ...(pair.occlusion ? { occlusion: mask(pair.occlusion) } : {}),
    ...(pair.ignore ? { ignore: mask(pair.ignore) } : {}),
    ...(pair.masks ? { masks: pair.masks.map((m) => ({ name: m.name, data: m.data ? mask(m.data)! : null })) } : {}),
    ...(cam ? { camera: { ...cam, focalPx: cam.focalPx * sx, cxShiftPx: cam.cxShiftPx * sx } } : {}),
    disparityRange: [Math.floor(pair.disparityRange[0] * sx), Math.ceil(pair.disparityRange[1] * sx)],
  };
}

/**
 * The pair as the matchers see it under a condition (`clean` returns the pair itself).
 * Deterministic: the noise streams depend on the seed, the dataset, the pair id, the
 * condition and the camera only.
 */
export function applyCondition(pair: LoadedPair, name: string, seed: number): LoadedPair {
  if (name === CLEAN) return pair;
  const c = parseConditionName(name);
  if (!c) throw new Error(`unknown condition ${name}`);
  if (c.kind === 'scale') return { ...scaledPair(pair, c.strength), condition: name };
  const rng = (camera: string): (() => number) => mulberry32(seedFor(seed, `${pair.dataset}\u0000${pair.id}\u0000${name}\u0000${camera}`));
  const left = faultedImage(pair.left, c, 'left', rng('left'));
  const right = faultedImage(pair.right, c, 'right', rng('right'));
  return {
    ...pair,
    left,
    right,
    leftGray: left === pair.left ? pair.leftGray : toLuminance(left),
    rightGray: right === pair.right ? pair.rightGray : toLuminance(right),
    condition: name,
  };
}
