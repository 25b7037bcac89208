/**
 * Size limits shared by every decoder. A header's declared size is checked against
 * the limit before any pixel buffer is allocated, so a hostile or corrupt header
 * cannot make the process allocate gigabytes.
 */
import { InputError, UsageError } from '../core/errors.js';

/** Default largest image a decoder accepts: 200 megapixels (width * height). */
export const DEFAULT_MAX_PIXELS = 200_000_000;

/** Options every decoder takes. */
export interface DecodeOptions {
  /** Largest accepted width * height; default DEFAULT_MAX_PIXELS. */
  maxPixels?: number;
}

/** The effective pixel limit of some options; a bad limit is a usage error. */
export function pixelLimit(opts?: DecodeOptions): number {
  const m = opts?.maxPixels;
  if (m === undefined) return DEFAULT_MAX_PIXELS;
  if (!Number.isFinite(m) || m < 1) {
    throw new UsageError('maxPixels', `must be a positive number of pixels, got ${String(m)}`);
  }
  return m;
}

/**
 * Throws an InputError naming the file when width x height is not a usable size:
 * not positive integers, or more pixels than the limit.
 */
export function checkImageSize(name: string, width: number, height: number, maxPixels: number): void {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new InputError(name, `image size ${String(width)}x${String(height)} is not a positive size`);
  }
  const pixels = width * height;
  if (!Number.isSafeInteger(pixels) || pixels > maxPixels) {
    throw new InputError(name, `image size ${width}x${height} (${pixels} pixels) is above the limit of ${maxPixels} pixels`);
  }
}

/** Non-finite -> NaN in place (NaN is the only invalid value in memory). */
export function nonFiniteToNaN(a: Float32Array): void {
  const n = a.length;
  for (let i = 0; i < n; i++) {
    const v = a[i];
    if (v - v !== 0) a[i] = NaN;
  }
}

/** True when this machine stores typed arrays little-endian. */
export const HOST_LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;
