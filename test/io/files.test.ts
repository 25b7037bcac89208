/**
 * File readers and the atomic writer. Sources: README, "File formats" (formats chosen by
 * extension, PNG truth needs a declared scale, masks non-zero = occluded, writes
 * are atomic, user errors are one-line InputErrors naming the file) and POSIX
 * rename(2) semantics (the target is replaced as a whole).
 */
import { mkdirSync, readdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError, UsageError } from '../../src/core/errors.js';
import { fsError } from '../../src/io/files.js';
import {
  encodeNpy,
  encodePfm,
  encodePng,
  encodePngDisparity,
  readDisparityFile,
  readImageFile,
  readMaskFile,
  writeFileAtomic,
} from '../../src/io/index.js';
import { tempDir } from './helpers.js';

const { dir, cleanup } = tempDir('files');
afterAll(cleanup);

const disp = { width: 3, height: 2, data: Float32Array.of(1, 2.5, NaN, 4, 5, 6.25) };

async function rejection(p: Promise<unknown>): Promise<Error> {
  try {
    await p;
  } catch (e) {
    return e as Error;
  }
  throw new Error('expected a rejection');
}

describe('readDisparityFile', () => {
  it('chooses the decoder by extension (.pfm, .npy, .png with a scale), case-insensitive', async () => {
    writeFileSync(join(dir, 'a.pfm'), encodePfm(disp));
    writeFileSync(join(dir, 'a.NPY'), encodeNpy(disp));
    writeFileSync(join(dir, 'a.png'), encodePngDisparity(disp, { scale: 4, invalid: 65535 }));
    // values chosen on the 1/4 grid so the PNG stores them exactly (stored = d * 4)
    const want = [1, 2.5, NaN, 4, 5, 6.25];
    expect(Array.from((await readDisparityFile(join(dir, 'a.pfm'))).data)).toEqual(want);
    expect(Array.from((await readDisparityFile(join(dir, 'a.NPY'))).data)).toEqual(want);
    expect(Array.from((await readDisparityFile(join(dir, 'a.png'), { pngScale: 4, pngInvalid: 65535 })).data)).toEqual(want);
  });
  it('PNG truth without a scale is a UsageError naming the option and the file', async () => {
    const e = await rejection(readDisparityFile(join(dir, 'a.png')));
    expect(e).toBeInstanceOf(UsageError);
    expect(e.message).toMatch(/^pngScale: PNG disparity .*a\.png needs a scale/);
  });
  it('unknown extension, missing file, a folder, a device', async () => {
    const txt = join(dir, 'a.txt');
    expect((await rejection(readDisparityFile(txt))).message).toBe(`${txt}: disparity files must be .pfm, .png or .npy (got ".txt")`);
    const missing = join(dir, 'missing.pfm');
    const e = await rejection(readDisparityFile(missing));
    expect(e).toBeInstanceOf(InputError);
    expect(e.message).toBe(`${missing}: no such file`);
    const folder = join(dir, 'folder.pfm');
    mkdirSync(folder);
    expect((await rejection(readDisparityFile(folder))).message).toBe(`${folder}: is a folder, not a file`);
    const dev = join(dir, 'dev.pfm');
    symlinkSync('/dev/zero', dev); // would never end if read to EOF
    expect((await rejection(readDisparityFile(dev))).message).toBe(`${dev}: is not a regular file`);
  });
  it('passes the pixel limit through', async () => {
    const e = await rejection(readDisparityFile(join(dir, 'a.pfm'), { maxPixels: 5 }));
    expect(e.message).toMatch(/a\.pfm: image size 3x2 \(6 pixels\) is above the limit of 5/);
  });
});

describe('readImageFile and readMaskFile', () => {
  it('reads PNG images at full depth; other extensions refused', async () => {
    const p = join(dir, 'img.png');
    writeFileSync(p, encodePng({ width: 2, height: 1, channels: 1, bitDepth: 16, data: Uint16Array.of(300, 65535) }));
    const img = await readImageFile(p);
    expect([img.bitDepth, ...img.data]).toEqual([16, 300, 65535]);
    const jpg = join(dir, 'img.jpg');
    expect((await rejection(readImageFile(jpg))).message).toMatch(/img\.jpg: images must be PNG files/);
  });
  it('mask: non-zero = 1 (README, "File formats": masks), gray or colour, alpha ignored', async () => {
    const g = join(dir, 'mask.png');
    writeFileSync(g, encodePng({ width: 4, height: 1, channels: 1, bitDepth: 8, data: Uint8Array.of(0, 1, 255, 0) }));
    const m = await readMaskFile(g);
    expect([m.width, m.height, ...m.data]).toEqual([4, 1, 0, 1, 1, 0]);
    const c = join(dir, 'maskc.png');
    // RGBA pixels: (0,0,0,255) -> 0, (0,0,9,0) -> 1, (0,0,0,0) -> 0
    writeFileSync(c, encodePng({ width: 3, height: 1, channels: 4, bitDepth: 8, data: Uint8Array.of(0, 0, 0, 255, 0, 0, 9, 0, 0, 0, 0, 0) }));
    expect(Array.from((await readMaskFile(c)).data)).toEqual([0, 1, 0]);
  });
});

describe('writeFileAtomic', () => {
  it('writes and replaces a file, leaving no temporary file behind', async () => {
    const p = join(dir, 'out', 'run.json');
    mkdirSync(join(dir, 'out'));
    await writeFileAtomic(p, 'first');
    await writeFileAtomic(p, Uint8Array.of(0x41, 0x42));
    expect(readFileSync(p, 'utf8')).toBe('AB');
    expect(readdirSync(join(dir, 'out'))).toEqual(['run.json']);
  });
  it('a missing folder or a folder in the way is an InputError naming the target; no temp file left', async () => {
    const p = join(dir, 'nope', 'x.csv');
    const e = await rejection(writeFileAtomic(p, 'x'));
    expect(e).toBeInstanceOf(InputError);
    expect(e.message).toBe(`${p}: no such file`);
    const sub = join(dir, 'w');
    mkdirSync(join(sub, 'target'), { recursive: true });
    const e2 = await rejection(writeFileAtomic(join(sub, 'target'), 'x'));
    expect(e2).toBeInstanceOf(InputError);
    expect(e2.message.startsWith(`${join(sub, 'target')}: `)).toBe(true);
    expect(readdirSync(sub)).toEqual(['target']);
  });
});

describe('fsError', () => {
  it('maps permission and unknown errors to one line naming the file', () => {
    // Running as root, EACCES cannot be provoked on a real file here, so the mapping is checked directly.
    expect(fsError('/d/f.png', Object.assign(new Error('x'), { code: 'EACCES' })).message).toBe('/d/f.png: permission denied');
    expect(fsError('/d/f.png', Object.assign(new Error('x'), { code: 'EWEIRD' }), 'write').message).toBe('/d/f.png: cannot write (EWEIRD)');
  });
});
