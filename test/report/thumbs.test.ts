/**
 * Thumbnail arithmetic: block means against numpy on the same data, the one-pass truth
 * thumbnail against the two-step reference kept in the tree, colour levels by hand.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { downscaleNanMean } from '../../src/report/preview.js';
import { blockMeanThumb, colorizeDisparity, colorizeError, downscaleRaster, HATCH_DARK, HATCH_LIGHT, MAP_LEVELS, NO_TRUTH, toThumbGrid } from '../../src/report/thumbs.js';
import { createPrng } from '../../src/stats/prng.js';

const dir = mkdtempSync(join(tmpdir(), 'plx-thumbs-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Run numpy (Debian's python3) on raw little-endian arrays written to the temp dir. */
function numpy(script: string): void {
  execFileSync('/usr/bin/python3', ['-c', script], { encoding: 'utf8', timeout: 20000 });
}

describe('downscaleRaster', () => {
  for (const [w, h, ch, f, bits] of [
    [37, 23, 3, 4, 8],
    [40, 24, 1, 5, 8],
    [29, 17, 4, 3, 16],
    [16, 9, 2, 2, 8],
  ] as const) {
    it(`${w}x${h}, ${ch} channel(s), ${bits} bit, factor ${f}: block means equal numpy's (partial edge blocks included)`, () => {
      const rng = createPrng(w * 100 + h);
      const n = w * h * ch;
      const data = bits === 8 ? new Uint8Array(n) : new Uint16Array(n);
      for (let i = 0; i < n; i++) data[i] = rng.int(bits === 8 ? 256 : 65536);
      const got = downscaleRaster({ width: w, height: h, channels: ch, bitDepth: bits, data }, f);
      const inPath = join(dir, `in-${w}-${ch}.bin`);
      const outPath = join(dir, `out-${w}-${ch}.bin`);
      writeFileSync(inPath, Buffer.from(data.buffer, data.byteOffset, data.byteLength));
      // numpy: mean over each block slice (edge blocks are partial), 16-bit divided by 257,
      // rounded half up (floor(m + 0.5), like Math.round for m >= 0); gray(+alpha) -> 1
      // channel, RGB(A) -> 3.
      numpy(
        [
          'import numpy as np',
          `a = np.fromfile('${inPath}', dtype='<u${bits / 8}').astype(np.float64).reshape(${h}, ${w}, ${ch})`,
          `f = ${f}; oc = ${ch <= 2 ? 1 : 3}`,
          `H = -(-${h} // f); W = -(-${w} // f)`,
          'out = np.zeros((H, W, oc))',
          'for by in range(H):',
          '  for bx in range(W):',
          '    out[by, bx] = a[by*f:(by+1)*f, bx*f:(bx+1)*f, :oc].mean(axis=(0, 1))',
          `out = np.floor(out * ${bits === 16 ? '(1 / 257)' : '1'} + 0.5).astype(np.uint8)`,
          `out.tofile('${outPath}')`,
        ].join('\n'),
      );
      const want = new Uint8Array(readFileSync(outPath));
      expect([got.width, got.height, got.channels, got.bitDepth]).toEqual([Math.ceil(w / f), Math.ceil(h / f), ch <= 2 ? 1 : 3, 8]);
      expect(Array.from(got.data)).toEqual(Array.from(want));
    });
  }

  it('a worked example: 3x2 RGB by factor 2 (edge column alone)', () => {
    // Block (0,0) = pixels (0,0),(1,0),(0,1),(1,1); block (1,0) = (2,0),(2,1). By hand.
    const data = Uint8Array.from([10, 0, 0, 20, 0, 0, 100, 1, 2, /* row 1 */ 30, 0, 0, 41, 0, 0, 201, 2, 3]);
    const got = downscaleRaster({ width: 3, height: 2, channels: 3, bitDepth: 8, data }, 2);
    // (10+20+30+41)/4 = 25.25 -> 25; (100+201)/2 = 150.5 -> 151; (1+2)/2 = 1.5 -> 2; (2+3)/2 = 2.5 -> 3.
    expect(Array.from(got.data)).toEqual([25, 0, 0, 151, 2, 3]);
  });
});

describe('blockMeanThumb', () => {
  it('equals toThumbGrid(downscaleNanMean(...)) value for value, NaN included (reference path in the tree)', () => {
    const rng = createPrng(5);
    for (const [w, h, pf, f] of [
      [97, 61, 3, 5],
      [160, 120, 1, 2],
      [64, 48, 1, 1],
      [131, 77, 2, 7],
    ] as const) {
      const data = new Float32Array(w * h);
      for (let i = 0; i < data.length; i++) data[i] = rng.next() < 0.2 ? NaN : rng.next() * 40 - 3;
      // A block with no valid pixel at all.
      for (let y = 0; y < Math.min(h, 8); y++) for (let x = 0; x < Math.min(w, 8); x++) data[y * w + x] = NaN;
      const img = { width: w, height: h, data };
      const ref = toThumbGrid(downscaleNanMean(img, pf), pf, w, h, f);
      const got = blockMeanThumb(img, pf, f);
      expect([got.width, got.height]).toEqual([ref.width, ref.height]);
      expect(Array.from(got.data)).toEqual(Array.from(ref.data));
      expect(Number.isNaN(got.data[0])).toBe(true);
    }
  });

  it('matches numpy.nanmean of the sampled blocks', () => {
    const w = 50;
    const h = 31;
    const pf = 3;
    const f = 4;
    const rng = createPrng(9);
    const data = new Float32Array(w * h);
    for (let i = 0; i < data.length; i++) data[i] = rng.next() < 0.3 ? NaN : rng.next() * 64;
    const inPath = join(dir, 'nan.bin');
    const outPath = join(dir, 'nan-out.bin');
    writeFileSync(inPath, Buffer.from(data.buffer));
    // numpy: the thumbnail pixel (tx, ty) takes the preview block holding full-size pixel
    // (min(w-1, tx*f + f//2), min(h-1, ty*f + f//2)); its value is nanmean of that block.
    numpy(
      [
        'import numpy as np, warnings',
        'warnings.simplefilter("ignore")',
        `a = np.fromfile('${inPath}', dtype='<f4').astype(np.float64).reshape(${h}, ${w})`,
        `w, h, pf, f = ${w}, ${h}, ${pf}, ${f}`,
        'pw, ph = -(-w // pf), -(-h // pf)',
        'out = np.zeros((-(-h // f), -(-w // f)), dtype=np.float32)',
        'for ty in range(out.shape[0]):',
        '  sy = min(ph - 1, min(h - 1, ty*f + f//2) // pf)',
        '  for tx in range(out.shape[1]):',
        '    sx = min(pw - 1, min(w - 1, tx*f + f//2) // pf)',
        '    out[ty, tx] = np.nanmean(a[sy*pf:(sy+1)*pf, sx*pf:(sx+1)*pf])',
        `out.tofile('${outPath}')`,
      ].join('\n'),
    );
    const want = new Float32Array(new Uint8Array(readFileSync(outPath)).buffer);
    const got = blockMeanThumb({ width: w, height: h, data }, pf, f);
    expect(got.data.length).toBe(want.length);
    for (let i = 0; i < want.length; i++) {
      if (Number.isNaN(want[i])) expect(got.data[i]).toBeNaN();
      // float64 sums in a different order: equal to float32 rounding.
      else expect(Math.abs(got.data[i] - want[i])).toBeLessThanOrEqual(Math.abs(want[i]) * 2e-7);
    }
  });
});

describe('colour levels', () => {
  it('disparity: level = round((d - lo) / (hi - lo) * 63), clamped; NaN hatched (worked by hand)', () => {
    const top = MAP_LEVELS - 1;
    expect(top).toBe(63);
    // lo = 10, hi = 20: d = 10 -> 0; 15 -> 31.5 -> 32; 12 -> 12.6 -> 13; 25 -> clamped 63; 0 -> 0.
    const img = colorizeDisparity({ width: 6, height: 1, data: Float32Array.from([10, 15, 12, 25, 0, NaN]) }, 10, 20);
    expect(Array.from(img.index.subarray(0, 5))).toEqual([0, 32, 13, 63, 0]);
    expect(img.index[5]).toBeGreaterThan(top);
    // The truth's own NaN means "no truth": flat NO_TRUTH grey, not the no-prediction hatch.
    const t = colorizeDisparity({ width: 4, height: 1, data: Float32Array.from([NaN, NaN, NaN, NaN]) }, 10, 20, 'viridis', 'no-truth');
    const p = t.palette;
    for (const i of t.index) expect([p[i * 3], p[i * 3 + 1], p[i * 3 + 2]]).toEqual([...NO_TRUTH]);
    // Hatch: (x + y) & 3 < 2 is dark (x = 0, 1), else light (x = 2, 3) (thumbs.ts definition).
    const h = colorizeDisparity({ width: 4, height: 1, data: Float32Array.from([NaN, NaN, NaN, NaN]) }, 10, 20);
    const rgb = (i: number) => [h.palette[h.index[i] * 3], h.palette[h.index[i] * 3 + 1], h.palette[h.index[i] * 3 + 2]];
    expect([rgb(0), rgb(1), rgb(2), rgb(3)]).toEqual([[...HATCH_DARK], [...HATCH_DARK], [...HATCH_LIGHT], [...HATCH_LIGHT]]);
  });

  it('error: level = round(|p - t| / clip * 63), clipped at the stated px value (worked by hand)', () => {
    // clip 4 px: |e| = 0 -> 0; 1 -> 15.75 -> 16; 2 -> 31.5 -> 32; 3.9 -> 61.425 -> 61; 4 -> 63; 9 -> 63; e negative the same.
    const truth = { width: 7, height: 1, data: Float32Array.from([5, 5, 5, 5, 5, 5, 5]) };
    const pred = { width: 7, height: 1, data: Float32Array.from([5, 6, 3, 8.9, 9, 14, 4]) };
    const img = colorizeError(pred, truth, 4);
    expect(Array.from(img.index)).toEqual([0, 16, 32, 61, 63, 63, 16]);
  });

  it('the cividis palette differs from viridis and both end in their tables\' last colour', () => {
    const d = { width: 2, height: 1, data: Float32Array.from([0, 1]) };
    const v = colorizeDisparity(d, 0, 1, 'viridis');
    const c = colorizeDisparity(d, 0, 1, 'cividis');
    expect(Array.from(v.index)).toEqual(Array.from(c.index));
    // Last level: viridis #fde725 and cividis (254, 232, 56) (matplotlib's table ends, see colormaps.test.ts).
    expect(Array.from(v.palette.subarray(63 * 3, 64 * 3))).toEqual([0xfd, 0xe7, 0x25]);
    expect(Array.from(c.palette.subarray(63 * 3, 64 * 3))).toEqual([254, 232, 56]);
  });
});
