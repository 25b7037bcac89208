/** The PNG container (ISO/IEC 15948): signature, chunk types, and the one chunk writer. */
import { crc32 } from 'node:zlib';

export const SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
export const T_IHDR = 0x49484452;
export const T_IDAT = 0x49444154;
export const T_IEND = 0x49454e44;
export const T_PLTE = 0x504c5445;
export const T_TRNS = 0x74524e53;

/** Allowed bit depths per colour type (PNG spec, IHDR table). */
export const DEPTHS: Record<number, readonly number[]> = {
  0: [1, 2, 4, 8, 16],
  2: [8, 16],
  3: [1, 2, 4, 8],
  4: [8, 16],
  6: [8, 16],
};
/** Samples per pixel per colour type, as stored in the file. */
export const SAMPLES: Record<number, number> = { 0: 1, 2: 3, 3: 1, 4: 2, 6: 4 };

/** One chunk: length, type, data, CRC-32 over type and data. */
export function pngChunk(type: string, data: Uint8Array): Buffer {
  const out = Buffer.alloc(12 + data.length);
  out.writeUInt32BE(data.length, 0);
  out.write(type, 4, 'latin1');
  out.set(data, 8);
  out.writeUInt32BE(crc32(out.subarray(4, 8 + data.length)), 8 + data.length);
  return out;
}

/** A whole file: signature, IHDR (compression 0, filter method 0, no interlace), the given chunks, IDAT with the zlib data, IEND. */
export function pngFile(ihdr: { width: number; height: number; bitDepth: number; colorType: number }, idat: Uint8Array, before: readonly Buffer[] = []): Buffer {
  const head = Buffer.alloc(13);
  head.writeUInt32BE(ihdr.width, 0);
  head.writeUInt32BE(ihdr.height, 4);
  head[8] = ihdr.bitDepth;
  head[9] = ihdr.colorType;
  return Buffer.concat([Buffer.from(SIGNATURE), pngChunk('IHDR', head), ...before, pngChunk('IDAT', idat), pngChunk('IEND', new Uint8Array(0))]);
}
