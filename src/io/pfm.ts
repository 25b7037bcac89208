/**
 * PFM (portable float map), single channel.
 *
 * Layout read and written here:
 *   `Pf` <ws> width <ws> height <ws> scale <one whitespace byte> data
 * where <ws> is one or more whitespace bytes (space, tab, LF, VT, FF, CR) and the data
 * are width * height 32-bit floats, rows stored bottom to top. The scale's sign gives
 * the byte order (negative = little-endian); its magnitude is ignored: values are
 * taken as stored. A zero scale (no byte order) is refused.
 *
 * Choices (documented in DEVELOPERS.md):
 * - `PF` (3-channel) files are refused with an InputError: a disparity map has one
 *   channel, and silently taking one of three colour planes would hide a mistake.
 * - The body must hold exactly width * height * 4 bytes. Extra bytes after the data
 *   are refused: they usually mean a header that lies about its size, or a header
 *   that ends in CR LF (two bytes where the format allows one), which would shift
 *   every value by one byte if tolerated.
 * - Infinities and NaN read as NaN (invalid).
 * - Width and height are plain decimal digits; no comments in the header.
 */
import { InputError } from '../core/errors.js';
import type { FloatImage } from '../core/image.js';
import { quote } from '../core/text.js';
import { checkImageSize, HOST_LITTLE_ENDIAN, nonFiniteToNaN, pixelLimit, type DecodeOptions } from './limits.js';

const MAX_TOKEN = 40;

function isSpace(b: number): boolean {
  return b === 0x20 || (b >= 0x09 && b <= 0x0d);
}

const INT_RE = /^[0-9]+$/;
const NUM_RE = /^[+-]?([0-9]+\.?[0-9]*|\.[0-9]+)([eE][+-]?[0-9]+)?$/;

/** Reads one header token starting at `pos` (which must not be whitespace). */
function readToken(buf: Uint8Array, pos: number, name: string, what: string): { text: string; end: number } {
  let end = pos;
  while (end < buf.length && !isSpace(buf[end])) {
    if (end - pos >= MAX_TOKEN) throw new InputError(name, `PFM header: ${what} is not a number`);
    end++;
  }
  if (end === buf.length) throw new InputError(name, `PFM header is truncated (no data after the ${what})`);
  let text = '';
  for (let i = pos; i < end; i++) text += String.fromCharCode(buf[i]);
  return { text, end };
}

function skipSpace(buf: Uint8Array, pos: number, name: string, what: string): number {
  if (pos >= buf.length || !isSpace(buf[pos])) throw new InputError(name, `PFM header: expected whitespace before the ${what}`);
  while (pos < buf.length && isSpace(buf[pos])) pos++;
  if (pos === buf.length) throw new InputError(name, `PFM header is truncated (no ${what})`);
  return pos;
}

function parseDim(text: string, name: string, what: string): number {
  if (!INT_RE.test(text)) throw new InputError(name, `PFM header: ${what} ${quote(text)} is not a positive integer`);
  const v = Number(text);
  if (v === 0) throw new InputError(name, `PFM header: ${what} is zero`);
  return v;
}

/** Decodes a single-channel PFM into a top-row-first float image. */
export function decodePfm(buf: Uint8Array, name: string, opts?: DecodeOptions): FloatImage {
  const maxPixels = pixelLimit(opts);
  if (buf.length < 3 || buf[0] !== 0x50 || (buf[1] !== 0x66 && buf[1] !== 0x46) || !isSpace(buf[2])) {
    throw new InputError(name, 'not a PFM file (it does not start with "Pf")');
  }
  if (buf[1] === 0x46) {
    throw new InputError(name, 'is a 3-channel PFM ("PF"); disparity must be a single-channel PFM ("Pf")');
  }
  let pos = skipSpace(buf, 2, name, 'width');
  const w = readToken(buf, pos, name, 'width');
  pos = skipSpace(buf, w.end, name, 'height');
  const h = readToken(buf, pos, name, 'height');
  pos = skipSpace(buf, h.end, name, 'scale');
  const s = readToken(buf, pos, name, 'scale');
  const width = parseDim(w.text, name, 'width');
  const height = parseDim(h.text, name, 'height');
  if (!NUM_RE.test(s.text)) throw new InputError(name, `PFM header: scale ${quote(s.text)} is not a number`);
  const scale = Number(s.text);
  if (!Number.isFinite(scale) || scale === 0) {
    throw new InputError(name, `PFM header: scale ${quote(s.text)} gives no byte order (must be non-zero)`);
  }
  checkImageSize(name, width, height, maxPixels);
  const little = scale < 0;
  const start = s.end + 1; // exactly one whitespace byte after the scale
  const expected = width * height * 4;
  const have = buf.length - start;
  if (have < expected) {
    throw new InputError(
      name,
      `PFM is truncated: header says ${width}x${height} (${expected} bytes of data) but ${have} bytes follow`,
    );
  }
  if (have > expected) {
    throw new InputError(
      name,
      `PFM has ${have - expected} bytes after the ${width}x${height} pixel data (header size wrong, or more than one whitespace byte after the scale)`,
    );
  }
  const data = new Float32Array(width * height);
  const bytes = new Uint8Array(data.buffer);
  const rowBytes = width * 4;
  for (let r = 0; r < height; r++) {
    // file row r counts from the bottom
    const src = start + r * rowBytes;
    bytes.set(buf.subarray(src, src + rowBytes), (height - 1 - r) * rowBytes);
  }
  if (little !== HOST_LITTLE_ENDIAN) swap32(bytes);
  nonFiniteToNaN(data);
  return { width, height, data };
}

function swap32(b: Uint8Array): void {
  const n = b.length;
  for (let i = 0; i < n; i += 4) {
    const a0 = b[i];
    const a1 = b[i + 1];
    b[i] = b[i + 3];
    b[i + 1] = b[i + 2];
    b[i + 2] = a1;
    b[i + 3] = a0;
  }
}

/** Checks the shape of an in-memory float image (a programming error if wrong). */
export function assertFloatImage(img: FloatImage): void {
  const { width, height, data } = img;
  if (!Number.isSafeInteger(width) || !Number.isSafeInteger(height) || width < 1 || height < 1) {
    throw new RangeError(`image size ${String(width)}x${String(height)} is not a positive size`);
  }
  if (!(data instanceof Float32Array) || data.length !== width * height) {
    throw new RangeError(`image data must be a Float32Array of ${width * height} values`);
  }
}

/**
 * Encodes a single-channel PFM: little-endian (scale -1) by default, big-endian
 * (scale 1) with `littleEndian: false`. Rows are written bottom to top.
 */
export function encodePfm(img: FloatImage, opts?: { littleEndian?: boolean }): Buffer {
  assertFloatImage(img);
  const little = opts?.littleEndian ?? true;
  const { width, height } = img;
  const header = Buffer.from(`Pf\n${width} ${height}\n${little ? '-1' : '1'}\n`, 'latin1');
  const rowBytes = width * 4;
  const out = Buffer.alloc(header.length + rowBytes * height);
  header.copy(out, 0);
  const src = new Uint8Array(img.data.buffer, img.data.byteOffset, img.data.byteLength);
  for (let r = 0; r < height; r++) {
    const from = (height - 1 - r) * rowBytes;
    out.set(src.subarray(from, from + rowBytes), header.length + r * rowBytes);
  }
  if (little !== HOST_LITTLE_ENDIAN) swap32(out.subarray(header.length));
  return out;
}
