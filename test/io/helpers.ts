/**
 * Test helpers that build files byte by byte from the published formats, without
 * going through src/io: a CRC-32 written from the PNG specification's sample code
 * (ISO/IEC 15948 / W3C PNG, Annex D), PNG chunk assembly, Adam7 interlacing, and
 * spawning Debian's Python with numpy/OpenCV on files in a temp folder.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { deflateSync } from 'node:zlib';
import { DEBIAN_PYTHON, runPython as runPy } from '../support/python.js';

/** CRC table per the PNG specification, Annex D (polynomial 0xEDB88320, reflected). */
const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

/** CRC-32 per PNG spec Annex D: crc = update(0xffffffff, bytes) ^ 0xffffffff. */
export function specCrc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (let i = 0; i < bytes.length; i++) c = CRC_TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

export const PNG_SIGNATURE = Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

/** One chunk: length (4, big-endian), type (4 ASCII), data, CRC over type + data. */
export function pngChunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, data.length);
  for (let i = 0; i < 4; i++) out[4 + i] = type.charCodeAt(i);
  out.set(data, 8);
  dv.setUint32(8 + data.length, specCrc32(out.subarray(4, 8 + data.length)));
  return out;
}

export function ihdr(width: number, height: number, bitDepth: number, colorType: number, interlace = 0): Uint8Array {
  const d = new Uint8Array(13);
  const dv = new DataView(d.buffer);
  dv.setUint32(0, width);
  dv.setUint32(4, height);
  d[8] = bitDepth;
  d[9] = colorType;
  d[12] = interlace;
  return pngChunk('IHDR', d);
}

export function concat(parts: Uint8Array[]): Uint8Array {
  const n = parts.reduce((s, p) => s + p.length, 0);
  const out = new Uint8Array(n);
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

/**
 * Scanlines with filter type 0 (None) before each row. `rows[y]` holds the packed
 * sample bytes of row y (already big-endian for 16 bit, already bit-packed below 8 bit).
 */
export function unfilteredScanlines(rows: Uint8Array[]): Uint8Array {
  return concat(rows.flatMap((r) => [Uint8Array.of(0), r]));
}

/** A whole PNG from an IHDR and the unfiltered scanline bytes (zlib-compressed into one IDAT). */
export function buildPng(header: Uint8Array, scanlines: Uint8Array, extra: Uint8Array[] = []): Uint8Array {
  return concat([PNG_SIGNATURE, header, ...extra, pngChunk('IDAT', deflateSync(scanlines)), pngChunk('IEND', new Uint8Array(0))]);
}

/** Big-endian bytes of 16-bit samples. */
export function be16(values: number[]): Uint8Array {
  const out = new Uint8Array(values.length * 2);
  for (let i = 0; i < values.length; i++) {
    out[2 * i] = values[i] >> 8;
    out[2 * i + 1] = values[i] & 0xff;
  }
  return out;
}

/** Adam7 passes (PNG spec, "Interlace method 1"): x start, y start, x step, y step. */
// Kept apart from src/io/png on purpose: these helpers are an independent writer from the
// specification, so that the decoder is never tested against itself.
export const ADAM7 = [
  [0, 0, 8, 8],
  [4, 0, 8, 8],
  [0, 4, 4, 8],
  [2, 0, 4, 4],
  [0, 2, 2, 4],
  [1, 0, 2, 2],
  [0, 1, 1, 2],
] as const;

/**
 * Interlaced scanlines of an image of `bytesPerPixel`-byte pixels (8 or 16 bit only),
 * each reduced row preceded by filter type 0; empty passes are omitted (PNG spec).
 */
export function adam7Scanlines(pixels: Uint8Array, width: number, height: number, bytesPerPixel: number): Uint8Array {
  const parts: Uint8Array[] = [];
  for (const [x0, y0, dx, dy] of ADAM7) {
    for (let y = y0; y < height; y += dy) {
      const row: number[] = [0];
      for (let x = x0; x < width; x += dx) {
        for (let b = 0; b < bytesPerPixel; b++) row.push(pixels[(y * width + x) * bytesPerPixel + b]);
      }
      if (row.length > 1) parts.push(Uint8Array.from(row));
    }
  }
  return concat(parts);
}

/** A fresh temp folder, removed by the returned function. */
export function tempDir(prefix: string): { dir: string; cleanup: () => void } {
  const dir = mkdtempSync(join(tmpdir(), `parallax-io-${prefix}-`));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

export { DEBIAN_PYTHON } from '../support/python.js';

/** Runs a Python script with Debian's interpreter in `cwd`; returns stdout. */
export function runPython(script: string, cwd: string): string {
  return runPy({ code: script, python: DEBIAN_PYTHON, cwd });
}

/**
 * Filtered scanlines with filter type `types[y % types.length]` on row y, computed
 * from the formulas in the PNG spec ("Filter algorithms"): Filt(x) = Orig(x) - predictor,
 * predictors None 0, Sub a, Up b, Average floor((a + b) / 2), Paeth PaethPredictor(a, b, c).
 * `bpp` = bytes per complete pixel (at least 1).
 */
export function filteredScanlines(rows: Uint8Array[], bpp: number, types: number[]): Uint8Array {
  const parts: Uint8Array[] = [];
  rows.forEach((row, y) => {
    const t = types[y % types.length];
    const prev = y > 0 ? rows[y - 1] : new Uint8Array(row.length);
    const out = new Uint8Array(row.length + 1);
    out[0] = t;
    for (let i = 0; i < row.length; i++) {
      const a = i >= bpp ? row[i - bpp] : 0;
      const b = prev[i];
      const c = i >= bpp ? prev[i - bpp] : 0;
      let pred = 0;
      if (t === 1) pred = a;
      else if (t === 2) pred = b;
      else if (t === 3) pred = Math.floor((a + b) / 2);
      else if (t === 4) {
        const p = a + b - c;
        const pa = Math.abs(p - a);
        const pb = Math.abs(p - b);
        const pc = Math.abs(p - c);
        pred = pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
      }
      out[i + 1] = (row[i] - pred) & 0xff;
    }
    parts.push(out);
  });
  return concat(parts);
}
