/**
 * NumPy `.npy` files (NEP 1, format versions 1.0, 2.0 and 3.0), one 2-D array.
 *
 * Read: magic `\x93NUMPY`, version, header length (uint16 LE for 1.x, uint32 LE for
 * 2.x/3.x), then a Python dict literal with `descr`, `fortran_order`, `shape`,
 * parsed here by a small tokenizer (never evaluated). Accepted:
 * - dtype: `<f4 >f4 <f8 >f8` (disparity), and also `<f2 >f2`, `|u1 |i1`,
 *   `<u2 >u2 <i2 >i2 <u4 >u4 <i4 >i4` (values taken as stored, converted to float32);
 *   anything else (structured, complex, int64, bool, strings) is refused.
 * - C order only; a Fortran-order file is refused.
 * - shape (H, W) or (H, W, 1).
 * - the data must be exactly H * W * itemsize bytes (extra bytes are refused).
 * Values that are not finite in float32 (NaN, infinities, float64 beyond float32's
 * range) read as NaN.
 *
 * Write: version 1.0, `<f4` (default) or `<f8`, C order, shape (H, W), header padded
 * with spaces and a final newline so the data start on a 64-byte boundary.
 */
import { InputError } from '../core/errors.js';
import type { FloatImage } from '../core/image.js';
import { checkImageSize, HOST_LITTLE_ENDIAN, nonFiniteToNaN, pixelLimit, type DecodeOptions } from './limits.js';
import { assertFloatImage } from './pfm.js';
import { quote } from '../core/text.js';

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]; // \x93NUMPY

type HeaderValue = string | boolean | number[];

/** A tiny parser for the Python literal in an .npy header: a dict of str -> (str | bool | tuple of int). */
class HeaderParser {
  private pos = 0;
  constructor(
    private readonly s: string,
    private readonly name: string,
  ) {}

  private fail(what: string): never {
    throw new InputError(this.name, `.npy header is not a valid dictionary (${what} at character ${this.pos})`);
  }

  private ws(): void {
    const s = this.s;
    while (this.pos < s.length) {
      const c = s.charCodeAt(this.pos);
      if (c === 0x20 || c === 0x09 || c === 0x0a || c === 0x0d) this.pos++;
      else break;
    }
  }

  private peek(): string {
    return this.s.charAt(this.pos);
  }

  private expect(ch: string): void {
    this.ws();
    if (this.peek() !== ch) this.fail(`expected "${ch}"`);
    this.pos++;
  }

  private str(): string {
    const q = this.peek();
    this.pos++;
    let out = '';
    for (;;) {
      if (this.pos >= this.s.length) this.fail('unterminated string');
      const c = this.s.charAt(this.pos++);
      if (c === q) return out;
      if (c === '\\') this.fail('escape sequence in a string');
      out += c;
    }
  }

  private value(): HeaderValue {
    this.ws();
    const c = this.peek();
    if (c === "'" || c === '"') return this.str();
    if (this.s.startsWith('True', this.pos)) {
      this.pos += 4;
      return true;
    }
    if (this.s.startsWith('False', this.pos)) {
      this.pos += 5;
      return false;
    }
    if (c === '(') return this.tuple();
    if (c === '[') this.fail('a list value (structured dtypes are not supported)');
    return this.fail('unexpected value');
  }

  private tuple(): number[] {
    this.pos++; // (
    const out: number[] = [];
    for (;;) {
      this.ws();
      if (this.peek() === ')') {
        this.pos++;
        return out;
      }
      const m = /^[0-9]{1,20}L?/.exec(this.s.slice(this.pos, this.pos + 22));
      if (!m) this.fail('expected an integer in the shape');
      out.push(Number(m[0].replace('L', '')));
      this.pos += m[0].length;
      if (out.length > 32) this.fail('too many dimensions');
      this.ws();
      if (this.peek() === ',') this.pos++;
      else if (this.peek() !== ')') this.fail('expected "," or ")" in the shape');
    }
  }

  dict(): Map<string, HeaderValue> {
    const out = new Map<string, HeaderValue>();
    this.expect('{');
    for (;;) {
      this.ws();
      if (this.peek() === '}') {
        this.pos++;
        break;
      }
      const c = this.peek();
      if (c !== "'" && c !== '"') this.fail('expected a key string');
      const key = this.str();
      this.expect(':');
      if (out.has(key)) this.fail(`key ${quote(key)} repeated`);
      out.set(key, this.value());
      if (out.size > 16) this.fail('too many keys');
      this.ws();
      if (this.peek() === ',') this.pos++;
      else if (this.peek() !== '}') this.fail('expected "," or "}"');
    }
    this.ws();
    if (this.pos !== this.s.length) this.fail('unexpected text after the dictionary');
    return out;
  }
}

interface Dtype {
  kind: 'f' | 'u' | 'i';
  size: 1 | 2 | 4 | 8;
  little: boolean;
}

const DTYPE_RE = /^([<>|])([fiu])([1248])$/;
const ACCEPTED = new Set(['f2', 'f4', 'f8', 'u1', 'i1', 'u2', 'i2', 'u4', 'i4']);

function parseDtype(descr: string, name: string): Dtype {
  const m = DTYPE_RE.exec(descr);
  if (!m || !ACCEPTED.has(m[2] + m[3]) || (m[1] === '|') !== (m[3] === '1')) {
    throw new InputError(
      name,
      `.npy dtype ${quote(descr)} is not supported (use float32 or float64: <f4 >f4 <f8 >f8; 8-32 bit integers and float16 are also read)`,
    );
  }
  return { kind: m[2] as Dtype['kind'], size: Number(m[3]) as Dtype['size'], little: m[1] !== '>' };
}

function halfToFloat(h: number): number {
  const s = h & 0x8000 ? -1 : 1;
  const e = (h >> 10) & 0x1f;
  const f = h & 0x3ff;
  if (e === 0) return s * f * 2 ** -24;
  if (e === 31) return f ? NaN : s * Infinity;
  return s * (1 + f / 1024) * 2 ** (e - 15);
}

/** Decodes a 2-D .npy array (H, W) or (H, W, 1) into a float image. */
export function decodeNpy(buf: Uint8Array, name: string, opts?: DecodeOptions): FloatImage {
  const maxPixels = pixelLimit(opts);
  for (let i = 0; i < 6; i++) {
    if (buf[i] !== MAGIC[i]) throw new InputError(name, 'not a .npy file (no \\x93NUMPY magic)');
  }
  if (buf.length < 10) throw new InputError(name, '.npy header is truncated');
  const major = buf[6];
  if (major !== 1 && major !== 2 && major !== 3) {
    throw new InputError(name, `.npy format version ${major}.${buf[7]} is not supported (1.0, 2.0, 3.0 are)`);
  }
  const dv = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
  let headerStart: number;
  let headerLen: number;
  if (major === 1) {
    headerLen = dv.getUint16(8, true);
    headerStart = 10;
  } else {
    if (buf.length < 12) throw new InputError(name, '.npy header is truncated');
    headerLen = dv.getUint32(8, true);
    headerStart = 12;
  }
  if (headerStart + headerLen > buf.length) {
    throw new InputError(name, `.npy header is truncated (says ${headerLen} bytes, ${buf.length - headerStart} present)`);
  }
  // Latin-1 decoding; the keys and values we accept are ASCII in every version.
  const text = Buffer.from(buf.buffer, buf.byteOffset + headerStart, headerLen).toString('latin1');
  const dict = new HeaderParser(text, name).dict();
  const descr = dict.get('descr');
  const fortran = dict.get('fortran_order');
  const shape = dict.get('shape');
  if (typeof descr !== 'string' || typeof fortran !== 'boolean' || !Array.isArray(shape)) {
    throw new InputError(name, '.npy header lacks a valid descr, fortran_order or shape');
  }
  const dtype = parseDtype(descr, name);
  if (fortran) throw new InputError(name, '.npy array is in Fortran (column-major) order; save it in C order (np.ascontiguousarray)');
  if (!(shape.length === 2 || (shape.length === 3 && shape[2] === 1))) {
    throw new InputError(name, `.npy shape (${shape.join(', ')}) is not (height, width) or (height, width, 1)`);
  }
  const height = shape[0];
  const width = shape[1];
  if (width === 0 || height === 0) throw new InputError(name, `.npy shape (${shape.join(', ')}) is empty`);
  checkImageSize(name, width, height, maxPixels);
  const n = width * height;
  const start = headerStart + headerLen;
  const expected = n * dtype.size;
  const have = buf.length - start;
  if (have < expected) {
    throw new InputError(name, `.npy data are truncated: shape ${height}x${width} of ${descr} needs ${expected} bytes, ${have} present`);
  }
  if (have > expected) throw new InputError(name, `.npy has ${have - expected} bytes after the ${height}x${width} array`);
  const data = new Float32Array(n);
  const le = dtype.little;
  const code = dtype.kind + String(dtype.size);
  if (code === 'f4' && le === HOST_LITTLE_ENDIAN) {
    new Uint8Array(data.buffer).set(buf.subarray(start, start + expected));
  } else {
    readConverted(buf, start, n, code, le, data);
  }
  nonFiniteToNaN(data);
  return { width, height, data };
}

/** The typed array that reads each dtype code's elements in host byte order. */
const ELEMENT_ARRAYS = {
  f4: Float32Array,
  f8: Float64Array,
  f2: Uint16Array, // IEEE half: read as bits, widened by halfToFloat
  u1: Uint8Array,
  i1: Int8Array,
  u2: Uint16Array,
  i2: Int16Array,
  u4: Uint32Array,
  i4: Int32Array,
} as const;

/** Copies n elements of `code` from buf at off into out, converting to float32. */
function readConverted(buf: Uint8Array, off: number, n: number, code: string, le: boolean, out: Float32Array): void {
  const Elements = ELEMENT_ARRAYS[code as keyof typeof ELEMENT_ARRAYS];
  if (Elements === undefined) throw new RangeError(`unhandled dtype ${code}`);
  const size = Elements.BYTES_PER_ELEMENT;
  // A fresh copy is aligned for the typed array; swap it in place when the file's order is not the host's.
  const raw = new Uint8Array(buf.subarray(off, off + n * size)); // a copy: Buffer#slice would share memory
  if (size > 1 && le !== HOST_LITTLE_ENDIAN) swapBytes(raw, size);
  const elements = new Elements(raw.buffer, 0, n);
  if (code === 'f2') {
    for (let i = 0; i < n; i++) out[i] = halfToFloat(elements[i]);
  } else {
    out.set(elements);
  }
}

function swapBytes(raw: Uint8Array, size: number): void {
  for (let i = 0; i < raw.length; i += size) {
    for (let a = i, b = i + size - 1; a < b; a++, b--) {
      const t = raw[a];
      raw[a] = raw[b];
      raw[b] = t;
    }
  }
}

/** Encodes a float image as a version 1.0 .npy, little-endian, C order, shape (H, W). */
export function encodeNpy(img: FloatImage, dtype: 'float32' | 'float64' = 'float32'): Buffer {
  assertFloatImage(img);
  const { width, height, data } = img;
  const size = dtype === 'float64' ? 8 : 4;
  let dict = `{'descr': '<${dtype === 'float64' ? 'f8' : 'f4'}', 'fortran_order': False, 'shape': (${height}, ${width}), }`;
  // total header (magic 6 + version 2 + length 2 + dict + '\n') padded to a multiple of 64
  const total = Math.ceil((10 + dict.length + 1) / 64) * 64;
  dict = dict.padEnd(total - 10 - 1, ' ') + '\n';
  const out = Buffer.alloc(total + data.length * size);
  out.set(MAGIC, 0);
  out[6] = 1;
  out[7] = 0;
  out.writeUInt16LE(dict.length, 8);
  out.write(dict, 10, 'latin1');
  const dv = new DataView(out.buffer, out.byteOffset, out.byteLength);
  const n = data.length;
  if (size === 4) {
    if (HOST_LITTLE_ENDIAN) out.set(new Uint8Array(data.buffer, data.byteOffset, data.byteLength), total);
    else for (let i = 0; i < n; i++) dv.setFloat32(total + 4 * i, data[i], true);
  } else {
    for (let i = 0; i < n; i++) dv.setFloat64(total + 8 * i, data[i], true);
  }
  return out;
}
