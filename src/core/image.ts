/**
 * In-memory images. Pixel data are flat, row-major typed arrays (index = y * width + x),
 * top row first, whatever the file format stores.
 */

/** A decoded raster as stored in the file: 8 or 16 bit, 1-4 interleaved channels. */
export interface RasterImage {
  readonly width: number;
  readonly height: number;
  /** 1 gray, 2 gray+alpha, 3 RGB, 4 RGBA. */
  readonly channels: 1 | 2 | 3 | 4;
  readonly bitDepth: 8 | 16;
  /** Interleaved samples, length width * height * channels. */
  readonly data: Uint8Array | Uint16Array;
}

/** A single-channel float image (luminance, disparity, cost...). */
export interface FloatImage {
  readonly width: number;
  readonly height: number;
  readonly data: Float32Array;
}

/**
 * A left-referenced disparity map: d = x_left - x_right in pixels.
 * NaN is the only invalid value; a finite negative number is a valid answer.
 */
export type DisparityMap = FloatImage;

/** ITU-R BT.601 luma weights. */
export const BT601 = { r: 0.299, g: 0.587, b: 0.114 } as const;

/**
 * Luminance on a 0-255 scale whatever the bit depth (16-bit samples divided by 257),
 * ITU-R BT.601 weights for colour; alpha is ignored.
 */
export function toLuminance(img: RasterImage): Float32Array {
  const n = img.width * img.height;
  const out = new Float32Array(n);
  const src = img.data;
  const c = img.channels;
  const k = img.bitDepth === 16 ? 1 / 257 : 1;
  if (c === 1 || c === 2) {
    for (let i = 0, j = 0; i < n; i++, j += c) out[i] = src[j] * k;
  } else {
    const wr = BT601.r * k;
    const wg = BT601.g * k;
    const wb = BT601.b * k;
    for (let i = 0, j = 0; i < n; i++, j += c) out[i] = wr * src[j] + wg * src[j + 1] + wb * src[j + 2];
  }
  return out;
}

