/**
 * Geometry helpers of the program adapter, cross-checked against OpenCV run on the
 * same data (Debian's /usr/bin/python3 with python3-opencv):
 *   padEdge           == cv2.copyMakeBorder(..., BORDER_REPLICATE) on the right/bottom
 *   resampleBilinear  == cv2.resize(..., INTER_LINEAR) on float32 (pixel-centre aligned)
 * plus hand-worked cases for the NaN-aware disparity resampling and the frame maths.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { decodeNpy, encodeNpy } from '../../src/io/npy.js';
import { cropTopLeft, padEdge, resampleBilinear, resampleDisparity } from '../../src/plugins/resample.js';
import { outputToPairFrame, programFrame } from '../../src/plugins/program-images.js';
import { lcg32 } from '../support/rng.js';

let tmp: string;
beforeAll(() => {
  tmp = mkdtempSync(join(tmpdir(), 'parallax-plugins-resample-'));
});
afterAll(() => {
  rmSync(tmp, { recursive: true, force: true });
});

function randomImage(w: number, h: number, seed: number): Float32Array {
  const out = new Float32Array(w * h);
  const next = lcg32(seed); // LCG, Numerical Recipes constants
  for (let i = 0; i < out.length; i++) out[i] = (next() >>> 8) / 65536;
  return out;
}

const PAD_SRC = { w: 23, h: 17, seed: 3 };
const SIZES: [number, number][] = [
  [24, 16],
  [96, 64],
  [33, 21],
];
let refs: { width: number; height: number; data: Float32Array }[] = [];

/**
 * One Python run for every reference: in0.npy is padded with BORDER_REPLICATE to 32x32,
 * in1.npy is resized to each of SIZES with INTER_LINEAR; results saved as out<k>.npy.
 */
beforeAll(() => {
  writeFileSync(join(tmp, 'in0.npy'), encodeNpy({ width: PAD_SRC.w, height: PAD_SRC.h, data: randomImage(PAD_SRC.w, PAD_SRC.h, PAD_SRC.seed) }));
  writeFileSync(join(tmp, 'in1.npy'), encodeNpy({ width: 48, height: 32, data: randomImage(48, 32, 9) }));
  const code = [
    'import cv2, numpy as np, sys, os',
    'd = sys.argv[1]',
    'a = np.load(os.path.join(d, "in0.npy")).astype(np.float32)',
    'np.save(os.path.join(d, "out0.npy"), cv2.copyMakeBorder(a, 0, 32 - a.shape[0], 0, 32 - a.shape[1], cv2.BORDER_REPLICATE))',
    'b = np.load(os.path.join(d, "in1.npy")).astype(np.float32)',
    ...SIZES.map(([w, h], k) => `np.save(os.path.join(d, "out${k + 1}.npy"), cv2.resize(b, (${w}, ${h}), interpolation=cv2.INTER_LINEAR))`),
  ].join('\n');
  execFileSync('/usr/bin/python3', ['-c', code, tmp], { stdio: ['ignore', 'ignore', 'pipe'] });
  refs = [0, 1, 2, 3].map((k) => decodeNpy(readFileSync(join(tmp, `out${k}.npy`)), `out${k}.npy`));
});

describe('padEdge and cropTopLeft', () => {
  it('match cv2.copyMakeBorder(BORDER_REPLICATE) on the right and bottom, and crop back', () => {
    const { w, h, seed } = PAD_SRC;
    const img = randomImage(w, h, seed);
    const padded = padEdge(img, w, h, 1, 32, 32);
    const ref = refs[0];
    expect([ref.width, ref.height]).toEqual([32, 32]);
    expect(Array.from(padded)).toEqual(Array.from(ref.data));
    expect(Array.from(cropTopLeft(padded, 32, w, h))).toEqual(Array.from(img));
  });

  it('replicates every channel of interleaved images (hand-worked 2x1 RGB -> 3x2)', () => {
    const src = Uint8Array.from([1, 2, 3, 4, 5, 6]);
    expect(Array.from(padEdge(src, 2, 1, 3, 3, 2))).toEqual([1, 2, 3, 4, 5, 6, 4, 5, 6, 1, 2, 3, 4, 5, 6, 4, 5, 6]);
  });
});

describe('resampleBilinear', () => {
  SIZES.forEach(([ow, oh], k) => {
    it(`matches cv2.resize INTER_LINEAR 48x32 -> ${ow}x${oh} (float32)`, () => {
      const img = randomImage(48, 32, 9);
      const ours = resampleBilinear(img, 48, 32, 1, ow, oh);
      const ref = refs[k + 1];
      expect([ref.width, ref.height]).toEqual([ow, oh]);
      let maxDiff = 0;
      for (let i = 0; i < ours.length; i++) maxDiff = Math.max(maxDiff, Math.abs(ours[i] - ref.data[i]));
      expect(maxDiff).toBeLessThan(1e-3);
    });
  });
});

describe('resampleDisparity and the program frame', () => {
  it('averages only finite neighbours and scales values (hand-worked 2x1 -> 4x1)', () => {
    // Pixel centres: x_src = (x + 0.5) / 2 - 0.5 = -0.25, 0.25, 0.75, 1.25 -> clamped 0, 0.25, 0.75, 1.
    const d = resampleDisparity(Float32Array.from([2, 6]), 2, 1, 4, 1, 2);
    expect(Array.from(d)).toEqual([4, 2 * (0.75 * 2 + 0.25 * 6), 2 * (0.25 * 2 + 0.75 * 6), 12]);
    const n = resampleDisparity(Float32Array.from([2, NaN]), 2, 1, 4, 1, 1);
    expect(Array.from(n)).toEqual([2, 2, 2, NaN]);
  });

  it('computes sizes and the scaled range (hand-worked)', () => {
    // 101x51 at 0.5 -> round(50.5) = 51 (JS rounds .5 up), round(25.5) = 26; pad 16 -> 64x32.
    expect(programFrame(101, 51, -3, 40, 0.5, 16)).toEqual({
      width: 101,
      height: 51,
      scaledW: 51,
      scaledH: 26,
      progW: 64,
      progH: 32,
      minDisparity: Math.floor(-3 * (51 / 101)),
      maxDisparity: Math.ceil(40 * (51 / 101)),
    });
  });

  it('maps program output back: sentinel, sign, scale, crop and resize', () => {
    // Program frame 4x2 (pad from 3x2, no resize); raw -8 with sign -1 and scale 0.5 -> 4 px.
    const f = programFrame(3, 2, 0, 10, undefined, 4);
    const raw = Float32Array.from([-8, -8, 99, 7, -8, Infinity, -8, 7]);
    expect(Array.from(outputToPairFrame(raw, f, -1, 0.5, 99))).toEqual([4, 4, NaN, 4, NaN, 4]);
  });
});
