/**
 * Decoding PNG (ISO/IEC 15948, W3C PNG) images.
 *
 * Decoding: the chunk layout is walked here first (signature, IHDR first, chunk
 * lengths inside the file, CRCs, IEND), the IHDR size is checked against the pixel
 * limit, and the image data are inflated with the IHDR's size as the output bound and
 * must be exactly that long. Non-interlaced files (nearly all) are then unfiltered and
 * unpacked here with typed-array loops; Adam7-interlaced files go to pngjs with
 * `skipRescale: true` (so 16-bit samples stay 16-bit), whose RGBA output is reduced to
 * the file's own channels. Either way:
 *   gray -> 1, gray+alpha -> 2, RGB -> 3, RGBA -> 4, palette -> 3 (4 with a tRNS chunk).
 * Choices (documented in DEVELOPERS.md):
 * - Gray images of 1, 2 or 4 bits are widened to 8 bits by the exact factor
 *   255 / (2^depth - 1) (PNG spec, sample depth scaling); 8 and 16 bit are never rescaled.
 * - A tRNS key colour in a gray or RGB image is ignored (the channels stay as stored).
 * - Bytes after the IEND chunk are ignored. Ancillary chunks are skipped.
 *
 */
import { crc32, inflateSync } from 'node:zlib';
import pngjs from 'pngjs';
import { InputError } from '../../core/errors.js';
import type { RasterImage } from '../../core/image.js';
import { checkImageSize, pixelLimit, type DecodeOptions } from '../limits.js';
import { DEPTHS, SAMPLES, SIGNATURE, T_IDAT, T_IEND, T_IHDR, T_PLTE, T_TRNS } from './chunks.js';
import { unfilterRows } from './filters.js';

/** What the IHDR chunk says. */
export interface PngHeader {
  width: number;
  height: number;
  bitDepth: number;
  colorType: number;
  interlaced: boolean;
}

interface Walked {
  header: PngHeader;
  /** The file as pngjs should see it (trailing bytes and ignored tRNS removed). */
  clean: Buffer;
  idat: Buffer[];
  /** PLTE body (palette images). */
  plte: Buffer | undefined;
  /** tRNS body of a palette image (alpha per entry); undefined otherwise. */
  trns: Buffer | undefined;
}

function asBuffer(buf: Uint8Array): Buffer {
  return Buffer.isBuffer(buf) ? buf : Buffer.from(buf.buffer, buf.byteOffset, buf.byteLength);
}

function chunkName(t: number): string {
  return String.fromCharCode((t >>> 24) & 0xff, (t >>> 16) & 0xff, (t >>> 8) & 0xff, t & 0xff).replace(/[^\x20-\x7e]/g, '?');
}

/** Walks the chunk list and validates the structure without touching the pixels. */
function walk(b: Buffer, name: string, maxPixels: number): Walked {
  for (let i = 0; i < 8; i++) {
    if (b[i] !== SIGNATURE[i]) throw new InputError(name, 'not a PNG file (bad signature)');
  }
  let pos = 8;
  let header: PngHeader | undefined;
  const keep: Buffer[] = [b.subarray(0, 8)];
  const idat: Buffer[] = [];
  let trns: Buffer | undefined;
  let plte: Buffer | undefined;
  for (;;) {
    if (pos + 12 > b.length) throw new InputError(name, 'PNG is truncated (no IEND chunk)');
    const len = b.readUInt32BE(pos);
    const type = b.readUInt32BE(pos + 4);
    if (len > 0x7fffffff || pos + 12 + len > b.length) {
      throw new InputError(name, `PNG is truncated (chunk ${chunkName(type)} runs past the end of the file)`);
    }
    const crcStored = b.readUInt32BE(pos + 8 + len);
    if (crc32(b.subarray(pos + 4, pos + 8 + len)) !== crcStored) {
      throw new InputError(name, `PNG chunk ${chunkName(type)} is corrupt (CRC mismatch)`);
    }
    const body = b.subarray(pos + 8, pos + 8 + len);
    const whole = b.subarray(pos, pos + 12 + len);
    pos += 12 + len;
    if (!header) {
      if (type !== T_IHDR || len !== 13) throw new InputError(name, 'PNG does not start with a valid IHDR chunk');
      header = parseIhdr(body, name);
      checkImageSize(name, header.width, header.height, maxPixels);
      keep.push(whole);
      continue;
    }
    if (type === T_IHDR) throw new InputError(name, 'PNG has a second IHDR chunk');
    if (type === T_IEND) {
      keep.push(whole);
      break;
    }
    const critical = ((type >>> 24) & 0x20) === 0; // uppercase first letter (PNG spec, chunk naming)
    if (critical && type !== T_IDAT && type !== T_PLTE) {
      throw new InputError(name, `PNG has an unknown critical chunk ${chunkName(type)}`);
    }
    if (type === T_IDAT) idat.push(body);
    if (type === T_PLTE) {
      if (plte) throw new InputError(name, 'PNG has a second PLTE chunk');
      if (len === 0 || len % 3 !== 0 || len > 768) throw new InputError(name, `PNG palette has an invalid length (${len} bytes)`);
      plte = body;
    }
    if (type === T_TRNS) {
      if (header.colorType !== 3) continue; // key colour ignored (see top of file)
      if (!plte || idat.length > 0) throw new InputError(name, 'PNG tRNS chunk must come after PLTE and before the image data');
      if (len > plte.length / 3) throw new InputError(name, 'PNG tRNS chunk has more entries than the palette');
      trns = body;
    }
    keep.push(whole);
  }
  if (!header) throw new InputError(name, 'PNG has no IHDR chunk');
  if (idat.length === 0) throw new InputError(name, 'PNG has no image data (IDAT)');
  if (header.colorType === 3 && !plte) throw new InputError(name, 'palette PNG has no PLTE chunk');
  return { header, clean: header.interlaced ? Buffer.concat(keep) : b.subarray(0, 0), idat, plte, trns };
}

function parseIhdr(d: Buffer, name: string): PngHeader {
  const width = d.readUInt32BE(0);
  const height = d.readUInt32BE(4);
  const bitDepth = d[8];
  const colorType = d[9];
  if (width === 0 || height === 0 || width > 0x7fffffff || height > 0x7fffffff) {
    throw new InputError(name, `PNG size ${width}x${height} is not valid`);
  }
  const allowed = DEPTHS[colorType];
  if (!allowed) throw new InputError(name, `PNG colour type ${colorType} is not valid`);
  if (!allowed.includes(bitDepth)) {
    throw new InputError(name, `PNG bit depth ${bitDepth} is not valid for colour type ${colorType}`);
  }
  if (d[10] !== 0 || d[11] !== 0) throw new InputError(name, 'PNG uses an unknown compression or filter method');
  if (d[12] !== 0 && d[12] !== 1) throw new InputError(name, `PNG interlace method ${d[12]} is not valid`);
  return { width, height, bitDepth, colorType, interlaced: d[12] === 1 };
}

/** Bytes of the filtered, inflated image data (one filter byte per row, Adam7 passes when interlaced). */
function inflatedSize(h: PngHeader): number {
  const bitsPerPixel = SAMPLES[h.colorType] * h.bitDepth;
  const rowBytes = (w: number) => Math.ceil((w * bitsPerPixel) / 8) + 1;
  if (!h.interlaced) return rowBytes(h.width) * h.height;
  // Adam7 passes: x start, y start, x step, y step
// The pass table is the PNG standard's (Interlace method 1), a table of numbers like the
// worked examples in the tests; test/io/helpers.ts has its own copy on purpose.
  const passes = [
    [0, 0, 8, 8],
    [4, 0, 8, 8],
    [0, 4, 4, 8],
    [2, 0, 4, 4],
    [0, 2, 2, 4],
    [1, 0, 2, 2],
    [0, 1, 1, 2],
  ];
  let total = 0;
  for (const [x0, y0, dx, dy] of passes) {
    const pw = Math.ceil((h.width - x0!) / dx!);
    const ph = Math.ceil((h.height - y0!) / dy!);
    if (pw > 0 && ph > 0) total += rowBytes(pw) * ph;
  }
  return total;
}

function oneLine(e: unknown): string {
  const m = e instanceof Error ? e.message : String(e);
  return m.replace(/\s+/g, ' ').replace(/[^\x20-\x7e]/g, '?').slice(0, 200);
}

/** Reads only the IHDR of a PNG (size and format), with the same structural checks on the first chunk. */
export function readPngHeader(buf: Uint8Array, name: string): PngHeader {
  const b = asBuffer(buf);
  for (let i = 0; i < 8; i++) {
    if (b[i] !== SIGNATURE[i]) throw new InputError(name, 'not a PNG file (bad signature)');
  }
  if (b.length < 33 || b.readUInt32BE(8) !== 13 || b.readUInt32BE(12) !== T_IHDR) {
    throw new InputError(name, 'PNG does not start with a valid IHDR chunk');
  }
  return parseIhdr(b.subarray(16, 29), name);
}

/**
 * Decodes a PNG at full bit depth: 8-bit files give a Uint8Array, 16-bit files a
 * Uint16Array with the stored values, never rescaled.
 */
export function decodePng(buf: Uint8Array, name: string, opts?: DecodeOptions): RasterImage {
  const maxPixels = pixelLimit(opts);
  const b = asBuffer(buf);
  const walked = walk(b, name, maxPixels);
  const { header } = walked;
  const expected = inflatedSize(header);
  // Inflate bounded by the size the IHDR declares, and check that the data are
  // exactly that long (pngjs would fill missing rows with zeros).
  let inflated: Buffer;
  try {
    inflated = inflateSync(Buffer.concat(walked.idat), { maxOutputLength: expected });
  } catch (e) {
    const code = (e as { code?: string }).code;
    if (code === 'ERR_BUFFER_TOO_LARGE') {
      throw new InputError(name, `PNG image data are longer than the ${header.width}x${header.height} image the IHDR declares`);
    }
    throw new InputError(name, `PNG image data are corrupt (${oneLine(e)})`);
  }
  if (inflated.length !== expected) {
    throw new InputError(
      name,
      `PNG image data are truncated: ${inflated.length} of ${expected} bytes for the ${header.width}x${header.height} image the IHDR declares`,
    );
  }
  if (header.interlaced) return decodeWithPngjs(walked, name);
  return decodeRows(inflated, header, walked.plte, walked.trns, name);
}


/** Samples of a non-interlaced image from its inflated data. */
function decodeRows(inflated: Uint8Array, h: PngHeader, plte: Buffer | undefined, trns: Buffer | undefined, name: string): RasterImage {
  const { width, height, bitDepth, colorType } = h;
  const n = width * height;
  const samples = SAMPLES[colorType];
  const bitsPerPixel = samples * bitDepth;
  const rowBytes = Math.ceil((width * bitsPerPixel) / 8);
  const raw = unfilterRows(inflated, height, rowBytes, Math.max(1, bitsPerPixel >> 3), name);
  if (colorType === 3) return expandPalette(raw, h, rowBytes, plte!, trns, name);
  const channels = samples as 1 | 2 | 3 | 4;
  if (bitDepth === 8) return { width, height, channels, bitDepth: 8, data: raw };
  if (bitDepth === 16) {
    const m = n * channels;
    const out = new Uint16Array(m);
    for (let i = 0, j = 0; i < m; i++, j += 2) out[i] = (raw[j] << 8) | raw[j + 1];
    return { width, height, channels, bitDepth: 16, data: out };
  }
  // gray below 8 bits: samples packed from the high bit; widen by the exact factor
  const out = new Uint8Array(n);
  const mask = (1 << bitDepth) - 1;
  const k = 255 / mask;
  for (let y = 0; y < height; y++) {
    const r = y * rowBytes;
    const o = y * width;
    for (let x = 0; x < width; x++) {
      const bit = x * bitDepth;
      out[o + x] = ((raw[r + (bit >>> 3)] >>> (8 - bitDepth - (bit & 7))) & mask) * k;
    }
  }
  return { width, height, channels: 1, bitDepth: 8, data: out };
}

function expandPalette(raw: Uint8Array, h: PngHeader, rowBytes: number, plte: Buffer, trns: Buffer | undefined, name: string): RasterImage {
  const { width, height, bitDepth } = h;
  const entries = plte.length / 3;
  const channels = trns ? 4 : 3;
  const out = new Uint8Array(width * height * channels);
  const mask = (1 << bitDepth) - 1;
  const nAlpha = trns ? trns.length : 0;
  for (let y = 0; y < height; y++) {
    const r = y * rowBytes;
    let o = y * width * channels;
    for (let x = 0; x < width; x++) {
      let idx: number;
      if (bitDepth === 8) idx = raw[r + x];
      else {
        const bit = x * bitDepth;
        idx = (raw[r + (bit >>> 3)] >>> (8 - bitDepth - (bit & 7))) & mask;
      }
      if (idx >= entries) throw new InputError(name, `PNG palette index ${idx} at (x ${x}, y ${y}) is beyond the ${entries}-entry palette`);
      out[o] = plte[3 * idx];
      out[o + 1] = plte[3 * idx + 1];
      out[o + 2] = plte[3 * idx + 2];
      if (channels === 4) out[o + 3] = idx < nAlpha ? trns![idx] : 255;
      o += channels;
    }
  }
  return { width, height, channels, bitDepth: 8, data: out };
}

/** Interlaced (Adam7) files: pngjs deinterlaces, with skipRescale so 16-bit stays 16-bit. */
function decodeWithPngjs(walked: Walked, name: string): RasterImage {
  let rgba: Uint8Array | Uint16Array;
  try {
    const parsed = pngjs.PNG.sync.read(walked.clean, { skipRescale: true, checkCRC: false });
    rgba = parsed.data as unknown as Uint8Array | Uint16Array;
  } catch (e) {
    throw new InputError(name, `PNG image data are corrupt (${oneLine(e)})`);
  }
  const { width, height, colorType, bitDepth } = walked.header;
  const n = width * height;
  if (rgba.length !== n * 4) throw new InputError(name, 'PNG image data are corrupt (wrong decoded size)');
  let channels: 1 | 2 | 3 | 4;
  if (colorType === 0) channels = 1;
  else if (colorType === 4) channels = 2;
  else if (colorType === 2) channels = 3;
  else if (colorType === 6) channels = 4;
  else channels = walked.trns ? 4 : 3;
  const depth: 8 | 16 = bitDepth === 16 ? 16 : 8;
  const out = depth === 16 ? new Uint16Array(n * channels) : new Uint8Array(n * channels);
  // sub-8-bit gray: widen exactly to 8 bits (palette indices were already expanded by pngjs)
  const k = colorType === 0 && bitDepth < 8 ? 255 / (2 ** bitDepth - 1) : 1;
  if (channels === 1) {
    for (let i = 0, j = 0; i < n; i++, j += 4) out[i] = rgba[j] * k;
  } else if (channels === 2) {
    for (let i = 0, j = 0; i < n * 2; i += 2, j += 4) {
      out[i] = rgba[j];
      out[i + 1] = rgba[j + 3];
    }
  } else if (channels === 3) {
    for (let i = 0, j = 0; i < n * 3; i += 3, j += 4) {
      out[i] = rgba[j];
      out[i + 1] = rgba[j + 1];
      out[i + 2] = rgba[j + 2];
    }
  } else {
    out.set(rgba);
  }
  return { width, height, channels, bitDepth: depth, data: out };
}

