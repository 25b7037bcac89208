/**
 * Per-camera sensor model, applied to linear scene radiance (0-1 full scale):
 *   v   = clamp(gain * L + offset, 0, 1)
 *   e   = v ^ (1 / gamma)                      (display encoding; gamma 1 = linear)
 *   out = round(e * maxCode + sigma * k * n),  n ~ N(0, 1), clamped to [0, maxCode]
 * with maxCode 255 (8 bit) or 65535 (16 bit), sigma given in 8-bit codes and k = maxCode / 255
 * so the same sigma means the same on both depths. Noise is seeded; no Math.random.
 */
import type { RasterImage } from '../core/image.js';
import { BT601 } from '../core/image.js';
import { UsageError } from '../core/errors.js';
import { polarDraw } from './prng.js';

export interface SensorModel {
  /** Multiplies linear radiance (default 1). */
  readonly gain?: number;
  /** Added after the gain, in full-scale units (default 0). */
  readonly offset?: number;
  /** Encoding gamma: e = v^(1/gamma) (default 2.2; 1 = linear). */
  readonly gamma?: number;
  /** Standard deviation of additive Gaussian noise, in 8-bit codes (default 0). */
  readonly noiseSigma?: number;
  /** Output bit depth (default 8). */
  readonly bitDepth?: 8 | 16;
  /** 3 = RGB (default), 1 = gray (BT.601 luma of the linear radiance). */
  readonly channels?: 1 | 3;
}

export const DEFAULT_SENSOR: Required<SensorModel> = {
  gain: 1,
  offset: 0,
  gamma: 2.2,
  noiseSigma: 0,
  bitDepth: 8,
  channels: 3,
};

export function fullSensor(s: SensorModel | undefined): Required<SensorModel> {
  const r = { ...DEFAULT_SENSOR, ...(s ?? {}) };
  if (
    !(r.gain > 0) ||
    !Number.isFinite(r.offset) ||
    !(r.gamma > 0) ||
    !(r.noiseSigma >= 0) ||
    (r.bitDepth !== 8 && r.bitDepth !== 16) ||
    (r.channels !== 1 && r.channels !== 3)
  ) {
    throw new UsageError('sensor', `gain and gamma must be > 0, offset finite, noiseSigma >= 0, bitDepth 8 or 16, channels 1 or 3; got ${JSON.stringify(s)}`);
  }
  return r;
}

/**
 * Turn linear RGB radiance (3 floats per pixel) into a quantised raster.
 * `seed` drives the noise (one stream per camera).
 */
export function applySensor(
  radiance: Float32Array,
  width: number,
  height: number,
  sensor: SensorModel | undefined,
  seed: number,
): RasterImage {
  const s = fullSensor(sensor);
  const n = width * height;
  const ch = s.channels;
  const maxCode = s.bitDepth === 16 ? 65535 : 255;
  const sigma = s.noiseSigma * (maxCode / 255);
  const codes = new Int32Array(n * ch);
  const gain = s.gain;
  const offset = s.offset;
  const invGamma = 1 / s.gamma;
  // Encoding curve: a table with linear interpolation for v >= 1/256 (interpolation error
  // below 1e-5 full scale for gamma >= 1, from the second derivative bound h^2/8 |f''|),
  // Math.pow below it where the curve is steep.
  const LUT_N = 4096;
  const lut = new Float64Array(LUT_N + 2);
  for (let k = 0; k <= LUT_N + 1; k++) lut[k] = Math.pow(Math.min(1, k / LUT_N), invGamma) * maxCode;
  let state = seed >>> 0;
  let spare = 0;
  let haveSpare = false;
  const polar = new Float64Array(3);
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < ch; c++) {
      let L: number;
      if (ch === 1) {
        const j = i * 3;
        L = BT601.r * radiance[j] + BT601.g * radiance[j + 1] + BT601.b * radiance[j + 2];
      } else {
        L = radiance[i * 3 + c];
      }
      let v = gain * L + offset;
      v = v < 0 ? 0 : v > 1 ? 1 : v;
      let e: number;
      if (invGamma === 1) e = v * maxCode;
      else if (v < 1 / 256) e = Math.pow(v, invGamma) * maxCode;
      else {
        const pos = v * LUT_N;
        const k = Math.floor(pos);
        const w = pos - k;
        e = lut[k] + (lut[k + 1] - lut[k]) * w;
      }
      if (sigma > 0) {
        let g: number;
        if (haveSpare) {
          g = spare;
          haveSpare = false;
        } else {
          // Marsaglia & Bray's polar method (1964) on splitmix32 uniforms: exact normals,
          // no trigonometry.
          state = polarDraw(state, polar);
          const k = polar[2];
          g = polar[0] * k;
          spare = polar[1] * k;
          haveSpare = true;
        }
        e += sigma * g;
      }
      const q = Math.round(e);
      codes[i * ch + c] = q < 0 ? 0 : q > maxCode ? maxCode : q;
    }
  }
  const out = s.bitDepth === 16 ? new Uint16Array(n * ch) : new Uint8Array(n * ch);
  out.set(codes);
  return { width, height, channels: ch, bitDepth: s.bitDepth, data: out };
}
