/**
 * Reading and writing files: the only part of io/ that touches the file system.
 * Every file-system failure a user can cause (missing file, a folder, no permission)
 * becomes a one-line InputError naming the file.
 */
import { randomBytes } from 'node:crypto';
import { open, readFile, rename, stat, unlink } from 'node:fs/promises';
import { basename, dirname, extname, join } from 'node:path';
import { InputError, UsageError } from '../core/errors.js';
import type { FloatImage, RasterImage } from '../core/image.js';
import type { DecodeOptions } from './limits.js';
import { decodeNpy } from './npy.js';
import { decodePfm } from './pfm.js';
import { decodePng, decodePngDisparity } from './png.js';
import { quote } from '../core/text.js';

/** A binary mask: 1 where the file's pixel is non-zero, else 0. */
export interface MaskImage {
  readonly width: number;
  readonly height: number;
  readonly data: Uint8Array;
}

export interface DisparityReadOptions extends DecodeOptions {
  /** PNG only: stored = round(d * pngScale). Required for PNG. */
  pngScale?: number;
  /** PNG only: the stored code meaning "no truth" (default 0). */
  pngInvalid?: number;
}

const FS_REASONS: Record<string, string> = {
  ENOENT: 'no such file',
  EISDIR: 'is a folder, not a file',
  ENOTDIR: 'a part of the path is not a folder',
  EACCES: 'permission denied',
  EPERM: 'operation not permitted',
  EROFS: 'the file system is read-only',
  ENOSPC: 'no space left on the device',
  EMFILE: 'too many open files',
  ENAMETOOLONG: 'the path is too long',
  ELOOP: 'too many symbolic links',
  ERR_FS_FILE_TOO_LARGE: 'the file is too large to read',
};

/** Turns a file-system error into a one-line InputError naming the file. */
export function fsError(path: string, e: unknown, verb: 'read' | 'write' = 'read'): InputError {
  const code = (e as { code?: unknown } | null)?.code;
  const reason = typeof code === 'string' ? (FS_REASONS[code] ?? `cannot ${verb} (${code})`) : `cannot ${verb}`;
  return new InputError(path, reason);
}

/** Reads a whole regular file; refuses folders, devices and pipes (which could never end). */
export async function readFileBytes(path: string): Promise<Buffer> {
  try {
    const st = await stat(path);
    if (st.isDirectory()) throw Object.assign(new Error('dir'), { code: 'EISDIR' });
    if (!st.isFile()) throw new InputError(path, 'is not a regular file');
    return await readFile(path);
  } catch (e) {
    if (e instanceof InputError) throw e;
    throw fsError(path, e);
  }
}

/** Reads a PNG image at full bit depth. */
export async function readImageFile(path: string, opts?: DecodeOptions): Promise<RasterImage> {
  const ext = extname(path).toLowerCase();
  if (ext !== '.png') throw new InputError(path, `images must be PNG files (got ${ext ? quote(ext) : 'no extension'})`);
  const buf = await readFileBytes(path);
  return decodePng(buf, path, opts);
}

/** Reads a disparity map by extension: .pfm, .png (needs pngScale) or .npy. */
export async function readDisparityFile(path: string, opts?: DisparityReadOptions): Promise<FloatImage> {
  const ext = extname(path).toLowerCase();
  const dec = opts?.maxPixels !== undefined ? { maxPixels: opts.maxPixels } : undefined;
  if (ext === '.pfm') return decodePfm(await readFileBytes(path), path, dec);
  if (ext === '.npy') return decodeNpy(await readFileBytes(path), path, dec);
  if (ext === '.png') {
    if (opts?.pngScale === undefined) {
      throw new UsageError('pngScale', `PNG disparity ${path} needs a scale (stored = round(d * scale)); none was given`);
    }
    const enc = opts.pngInvalid !== undefined ? { scale: opts.pngScale, invalid: opts.pngInvalid } : { scale: opts.pngScale };
    return decodePngDisparity(await readFileBytes(path), path, enc, dec);
  }
  throw new InputError(path, `disparity files must be .pfm, .png or .npy (got ${ext ? quote(ext) : 'no extension'})`);
}

/**
 * Reads a mask PNG: 1 where the pixel is non-zero in any colour channel (alpha
 * ignored), else 0. 8-bit gray is the usual mask (README, "File formats"); other PNG kinds are read the same way.
 */
export async function readMaskFile(path: string, opts?: DecodeOptions): Promise<MaskImage> {
  const ext = extname(path).toLowerCase();
  if (ext !== '.png') throw new InputError(path, `masks must be PNG files (got ${ext ? quote(ext) : 'no extension'})`);
  const img = decodePng(await readFileBytes(path), path, opts);
  return maskFromRaster(img);
}

/** 1 where any colour channel (not alpha) is non-zero. */
export function maskFromRaster(img: RasterImage): MaskImage {
  const n = img.width * img.height;
  const c = img.channels;
  const colours = c === 1 || c === 2 ? 1 : 3;
  const src = img.data;
  const data = new Uint8Array(n);
  for (let i = 0, j = 0; i < n; i++, j += c) {
    let v = src[j];
    if (colours === 3) v = v | src[j + 1] | src[j + 2];
    data[i] = v !== 0 ? 1 : 0;
  }
  return { width: img.width, height: img.height, data };
}

/**
 * Writes a file atomically: the data go to a temporary file in the same folder,
 * which is flushed and then renamed over the target, so readers see the old file
 * or the new one, never a part.
 */
export async function writeFileAtomic(path: string, data: string | Uint8Array): Promise<void> {
  const tmp = join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(6).toString('hex')}.tmp`);
  let created = false;
  try {
    const fh = await open(tmp, 'wx');
    created = true;
    try {
      await fh.writeFile(data);
      await fh.sync();
    } finally {
      await fh.close();
    }
    await rename(tmp, path);
    created = false;
  } catch (e) {
    if (created) await unlink(tmp).catch(() => undefined);
    throw fsError(path, e, 'write');
  }
}
