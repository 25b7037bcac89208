/**
 * Cross-checks against general-purpose libraries on the same data: numpy (np.save,
 * np.load) and OpenCV (cv2.imwrite, cv2.imread) in Debian's Python (/usr/bin/python3).
 * Files written by them must decode to the values they were given (dumped as raw
 * little-endian bytes alongside), and files written by us must read back in them.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { decodeNpy, decodePfm, decodePng, encodeNpy, encodePfm, encodePng, encodePngDisparity } from '../../src/io/index.js';
import { runPython, tempDir } from './helpers.js';

const { dir, cleanup } = tempDir('cross');
afterAll(cleanup);

const W = 64;
const H = 48;

/** Little-endian float32 dump written by numpy (`tofile`), row-major, top row first. */
function rawF32(name: string): Float32Array {
  const b = readFileSync(join(dir, name));
  const out = new Float32Array(b.length / 4);
  const dv = new DataView(b.buffer, b.byteOffset, b.length);
  for (let i = 0; i < out.length; i++) out[i] = dv.getFloat32(4 * i, true);
  return out;
}
function rawU16(name: string): Uint16Array {
  const b = readFileSync(join(dir, name));
  const out = new Uint16Array(b.length / 2);
  for (let i = 0; i < out.length; i++) out[i] = b.readUInt16LE(2 * i);
  return out;
}
/** Expected in memory: infinities read as NaN (README, "File formats"). */
function invalidAsNaN(a: Float32Array): number[] {
  return Array.from(a, (v) => (Number.isFinite(v) ? v : NaN));
}

describe('files written by numpy / OpenCV decode to their values', () => {
  beforeAll(() => {
    runPython(
      `
import numpy as np, cv2
rng = np.random.default_rng(7)
a = (rng.random((${H}, ${W})) * 200 - 50).astype(np.float32)
a[3, 5] = np.nan
a[10, 2] = np.inf
a[11, 2] = -np.inf
a.astype('<f4').tofile('values.raw')
assert cv2.imwrite('cv.pfm', a)
np.save('le_f4.npy', a.astype('<f4'))
np.save('be_f4.npy', a.astype('>f4'))
np.save('le_f8.npy', a.astype('<f8'))
np.save('be_f8.npy', a.astype('>f8'))
np.save('hw1.npy', a[:, :, None])
np.save('fortran.npy', np.asfortranarray(a))
g16 = rng.integers(0, 65536, (${H}, ${W})).astype(np.uint16)
assert cv2.imwrite('g16.png', g16)
g16.astype('<u2').tofile('g16.raw')
bgr16 = rng.integers(0, 65536, (${H}, ${W}, 3)).astype(np.uint16)
assert cv2.imwrite('c16.png', bgr16)
bgr16[:, :, ::-1].astype('<u2').tofile('c16_rgb.raw')
`,
      dir,
    );
  });

  it('PFM from cv2.imwrite', () => {
    const img = decodePfm(readFileSync(join(dir, 'cv.pfm')), 'cv.pfm');
    expect([img.width, img.height]).toEqual([W, H]);
    expect(Array.from(img.data)).toEqual(invalidAsNaN(rawF32('values.raw')));
  });

  for (const f of ['le_f4.npy', 'be_f4.npy', 'le_f8.npy', 'be_f8.npy', 'hw1.npy']) {
    it(`np.save ${f}`, () => {
      const img = decodeNpy(readFileSync(join(dir, f)), f);
      expect([img.width, img.height]).toEqual([W, H]);
      // float32 values widened to f8 by numpy narrow back exactly
      expect(Array.from(img.data)).toEqual(invalidAsNaN(rawF32('values.raw')));
    });
  }

  it('np.save of a Fortran-order array is refused', () => {
    expect(() => decodeNpy(readFileSync(join(dir, 'fortran.npy')), 'fortran.npy')).toThrow(InputError);
    expect(() => decodeNpy(readFileSync(join(dir, 'fortran.npy')), 'fortran.npy')).toThrow(/Fortran/);
  });

  it('16-bit PNG from cv2.imwrite keeps its exact values (gray and colour)', () => {
    const g = decodePng(readFileSync(join(dir, 'g16.png')), 'g16.png');
    expect([g.width, g.height, g.channels, g.bitDepth]).toEqual([W, H, 1, 16]);
    expect(Array.from(g.data)).toEqual(Array.from(rawU16('g16.raw')));
    const c = decodePng(readFileSync(join(dir, 'c16.png')), 'c16.png');
    expect([c.channels, c.bitDepth]).toEqual([3, 16]);
    // OpenCV holds BGR in memory and writes RGB to the file; the dump was reordered to RGB in numpy
    expect(Array.from(c.data)).toEqual(Array.from(rawU16('c16_rgb.raw')));
  });
});

describe('files written by us read correctly in numpy / OpenCV', () => {
  it('PFM (both byte orders), .npy (f4, f8), PNG (16-bit gray, 16-bit RGB, 8-bit RGBA, disparity)', () => {
    const data = new Float32Array(W * H);
    for (let i = 0; i < data.length; i++) data[i] = Math.fround(Math.sin(i * 0.37) * 90 + (i % 7));
    data[17] = NaN;
    const img = { width: W, height: H, data };
    writeFileSync(join(dir, 'ours.raw'), Buffer.from(data.buffer));
    writeFileSync(join(dir, 'ours_le.pfm'), encodePfm(img));
    writeFileSync(join(dir, 'ours_be.pfm'), encodePfm(img, { littleEndian: false }));
    writeFileSync(join(dir, 'ours_f4.npy'), encodeNpy(img, 'float32'));
    writeFileSync(join(dir, 'ours_f8.npy'), encodeNpy(img, 'float64'));
    const g16 = Uint16Array.from({ length: W * H }, (_, i) => (i * 2654435761) % 65536);
    writeFileSync(join(dir, 'ours_g16.raw'), Buffer.from(g16.buffer));
    writeFileSync(join(dir, 'ours_g16.png'), encodePng({ width: W, height: H, channels: 1, bitDepth: 16, data: g16 }));
    const rgb16 = Uint16Array.from({ length: W * H * 3 }, (_, i) => (i * 40503 + 17) % 65536);
    writeFileSync(join(dir, 'ours_rgb16.raw'), Buffer.from(rgb16.buffer));
    writeFileSync(join(dir, 'ours_rgb16.png'), encodePng({ width: W, height: H, channels: 3, bitDepth: 16, data: rgb16 }));
    const rgba8 = Uint8Array.from({ length: W * H * 4 }, (_, i) => (i * 31 + (i >> 6)) % 256);
    writeFileSync(join(dir, 'ours_rgba8.raw'), rgba8);
    writeFileSync(join(dir, 'ours_rgba8.png'), encodePng({ width: W, height: H, channels: 4, bitDepth: 8, data: rgba8 }));
    const disp = Float32Array.from({ length: W * H }, (_, i) => (i % 13 === 0 ? NaN : 0.25 + (i % 200) * 0.5));
    writeFileSync(join(dir, 'ours_disp.raw'), Buffer.from(disp.buffer));
    writeFileSync(join(dir, 'ours_disp.png'), encodePngDisparity({ width: W, height: H, data: disp }, { scale: 64 }));

    const out = runPython(
      `
import json, numpy as np, cv2
H, W = ${H}, ${W}
f = np.fromfile('ours.raw', '<f4').reshape(H, W)
r = {}
for name in ['ours_le.pfm', 'ours_be.pfm']:
    m = cv2.imread(name, cv2.IMREAD_UNCHANGED)
    r[name] = m is not None and m.dtype == np.float32 and m.shape == (H, W) and bool(np.array_equal(m, f, equal_nan=True))
for name, dt in [('ours_f4.npy', '<f4'), ('ours_f8.npy', '<f8')]:
    m = np.load(name)
    r[name] = m.dtype == np.dtype(dt) and m.shape == (H, W) and bool(np.array_equal(m.astype(np.float32), f, equal_nan=True))
g = np.fromfile('ours_g16.raw', '<u2').reshape(H, W)
m = cv2.imread('ours_g16.png', cv2.IMREAD_UNCHANGED)
r['ours_g16.png'] = m.dtype == np.uint16 and bool(np.array_equal(m, g))
c = np.fromfile('ours_rgb16.raw', '<u2').reshape(H, W, 3)
m = cv2.imread('ours_rgb16.png', cv2.IMREAD_UNCHANGED)
r['ours_rgb16.png'] = m.dtype == np.uint16 and bool(np.array_equal(m[:, :, ::-1], c))
c = np.fromfile('ours_rgba8.raw', np.uint8).reshape(H, W, 4)
m = cv2.imread('ours_rgba8.png', cv2.IMREAD_UNCHANGED)
r['ours_rgba8.png'] = m.dtype == np.uint8 and m.shape == (H, W, 4) and bool(np.array_equal(m[:, :, [2, 1, 0, 3]], c))
d = np.fromfile('ours_disp.raw', '<f4').reshape(H, W)
m = cv2.imread('ours_disp.png', cv2.IMREAD_UNCHANGED)
want = np.where(np.isnan(d), 0, np.round(d.astype(np.float64) * 64)).astype(np.uint16)
r['ours_disp.png'] = m.dtype == np.uint16 and bool(np.array_equal(m, want))
print(json.dumps(r))
`,
      dir,
    );
    const r = JSON.parse(out) as Record<string, boolean>;
    expect(r).toEqual({
      'ours_le.pfm': true,
      'ours_be.pfm': true,
      'ours_f4.npy': true,
      'ours_f8.npy': true,
      'ours_g16.png': true,
      'ours_rgb16.png': true,
      'ours_rgba8.png': true,
      'ours_disp.png': true,
    });
  });
});
