/** Disparity PNG: gray, 8 or 16 bit, stored = round(d * scale); the `invalid` code (default 0) reads as NaN. */
import { InputError } from '../../core/errors.js';
import type { FloatImage } from '../../core/image.js';
import { assertFloatImage } from '../pfm.js';
import { pixelLimit, type DecodeOptions } from '../limits.js';
import { decodePng, readPngHeader } from './decode.js';
import { encodePng } from './encode.js';

export interface PngDisparityEncoding {
  /** stored = round(d * scale); required, no default. */
  scale: number;
  /** Stored code meaning "no truth"; default 0. */
  invalid?: number;
}

function checkEncoding(enc: PngDisparityEncoding, maxCode: number, name: string | undefined): number {
  if (!(typeof enc.scale === 'number' && Number.isFinite(enc.scale) && enc.scale > 0)) {
    throw new InputError(name, `PNG disparity scale must be a positive number, got ${String(enc.scale)}`);
  }
  const inv = enc.invalid ?? 0;
  if (!Number.isInteger(inv) || inv < 0 || inv > maxCode) {
    throw new InputError(name, `PNG disparity invalid code must be an integer in 0..${maxCode}, got ${String(inv)}`);
  }
  return inv;
}

/**
 * Decodes a disparity PNG (gray, 8 or 16 bit): d = stored / scale, the invalid code
 * (default 0) -> NaN.
 */
export function decodePngDisparity(
  buf: Uint8Array,
  name: string,
  enc: PngDisparityEncoding,
  opts?: DecodeOptions,
): FloatImage {
  const maxPixels = pixelLimit(opts);
  const h = readPngHeader(buf, name);
  if (h.colorType !== 0 || (h.bitDepth !== 8 && h.bitDepth !== 16)) {
    throw new InputError(name, `a disparity PNG must be 8- or 16-bit gray (this one is colour type ${h.colorType}, ${h.bitDepth} bit)`);
  }
  const inv = checkEncoding(enc, h.bitDepth === 16 ? 65535 : 255, name);
  const img = decodePng(buf, name, { maxPixels });
  const n = img.width * img.height;
  const data = new Float32Array(n);
  const src = img.data;
  const s = enc.scale;
  for (let i = 0; i < n; i++) {
    const v = src[i];
    data[i] = v === inv ? NaN : v / s;
  }
  return { width: img.width, height: img.height, data };
}

/** Why the value d at pixel i (stored as `code`) cannot be written with this encoding. */
function unstorable(name: string | undefined, d: number, code: number, at: { i: number; width: number }, enc: { s: number; bitDepth: number; inv: number }): InputError {
  const { s, bitDepth, inv } = enc;
  const where = `(x ${at.i % at.width}, y ${Math.floor(at.i / at.width)})`;
  if (d < 0) return new InputError(name, `negative disparity ${d} at ${where} cannot be stored in a PNG`);
  if (code === inv) return new InputError(name, `valid disparity ${d} at ${where} rounds onto the invalid code ${inv}`);
  const max = bitDepth === 16 ? 65535 : 255;
  return new InputError(name, `disparity ${d} at ${where} times scale ${s} = ${code} does not fit ${bitDepth} bits (max ${max})`);
}

/**
 * Encodes a disparity map as a gray PNG (16-bit by default): stored = round(d * scale),
 * NaN (and infinities) -> the invalid code. Refuses (InputError naming `name`) a
 * negative disparity, a value whose code does not fit the bit depth, and a valid
 * value that rounds onto the invalid code.
 */
export function encodePngDisparity(
  img: FloatImage,
  enc: PngDisparityEncoding & { bitDepth?: 8 | 16 },
  name?: string,
): Buffer {
  assertFloatImage(img);
  const bitDepth = enc.bitDepth ?? 16;
  if (bitDepth !== 8 && bitDepth !== 16) throw new RangeError(`bitDepth must be 8 or 16, got ${String(bitDepth)}`);
  const maxCode = bitDepth === 16 ? 65535 : 255;
  const inv = checkEncoding(enc, maxCode, name);
  const { width, height, data } = img;
  const n = width * height;
  const out = bitDepth === 16 ? new Uint16Array(n) : new Uint8Array(n);
  const s = enc.scale;
  for (let i = 0; i < n; i++) {
    const d = data[i];
    if (d - d !== 0) {
      out[i] = inv;
      continue;
    }
    const code = Math.round(d * s);
    if (d < 0 || code > maxCode || code === inv) throw unstorable(name, d, code, { i, width }, { s, bitDepth, inv });
    out[i] = code;
  }
  return encodePng({ width, height, channels: 1, bitDepth, data: out });
}
