/**
 * The block matcher's WebAssembly SIMD kernel (matchers/block/fast.ts, assembly/block.ts)
 * against the TypeScript reference (matchers/block/cost.ts slices + kernels/wta.ts
 * streaming WTA, itself checked against a naive window sum in block.test.ts). Both
 * compare luminance rounded to whole levels, so the maps must agree bit for bit.
 */
import { existsSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { AbortedError } from '../../src/core/errors.js';
import { roundLevel, roundLuminance } from '../../matchers/block/cost.js';
import { blockLastRun, blockMatch, blockMatcher } from '../../matchers/block/index.js';
import { wasmPath } from '../../matchers/sgm/wasm.js';
import { mulberry32, randomDotStereogram } from './block-rds.js';
import { randomImage } from '../support/rng.js';

type Img = { width: number; height: number; left: Float32Array; right: Float32Array };

/** NaN-aware exact comparison: index of the first difference, or -1. */
function firstDiff(a: Float32Array, b: Float32Array): number {
  if (a.length !== b.length) return 0;
  for (let i = 0; i < a.length; i++) {
    const x = a[i];
    const y = b[i];
    if (Number.isNaN(x) && Number.isNaN(y)) continue;
    if (!Object.is(x, y)) return i;
  }
  return -1;
}

/** Random images of three kinds: full-range noise, low contrast (many cost ties), a shifted pair. */
function makeImages(kind: number, width: number, height: number, seed: number): Img {
  const rnd = mulberry32(seed);
  const n = width * height;
  const left = new Float32Array(n);
  const right = new Float32Array(n);
  if (kind === 0) {
    for (let i = 0; i < n; i++) {
      left[i] = rnd() * 255;
      right[i] = rnd() * 255;
    }
  } else if (kind === 1) {
    for (let i = 0; i < n; i++) {
      left[i] = 100 + rnd() * 3;
      right[i] = 100 + rnd() * 3;
    }
  } else {
    // right = left shifted by 5 px plus noise, so most pixels have a clear best level
    for (let i = 0; i < n; i++) left[i] = rnd() * 255;
    for (let y = 0; y < height; y++)
      for (let x = 0; x < width; x++) right[y * width + x] = left[y * width + Math.min(width - 1, x + 5)] + (rnd() - 0.5) * 4;
  }
  return { width, height, left, right };
}

function both(img: Img, minD: number, maxD: number, params: Record<string, string | number | boolean>) {
  const input = { ...img, minDisparity: minD, maxDisparity: maxD };
  const w = blockMatch(input, { ...params, kernel: 'wasm' });
  const used = blockLastRun.kernel;
  const t = blockMatch(input, { ...params, kernel: 'ts' });
  return { w, t, used };
}

describe('block wasm kernel', () => {
  it('is built (scripts/build-wasm.sh runs in npm run build)', () => {
    expect(existsSync(wasmPath('block')!)).toBe(true);
  });

  it('rounds luminance to whole levels, halves up, clamped to 0..255 (documented in cost.ts)', () => {
    // Hand examples of Math.round (halves toward +infinity) and the clamp.
    const cases: [number, number][] = [
      [0.49, 0],
      [0.5, 1],
      [127.5, 128],
      [254.5, 255],
      [300, 255],
      [-3, 0],
      [-0.5, 0],
      [NaN, 0],
    ];
    for (const [v, want] of cases) expect(roundLevel(v)).toBe(want);
    // roundLevel computes floor(x + 0.5); it must equal Math.round (ECMAScript) clamped to
    // 0..255 for every float32 input, including the float32 neighbours of each half.
    const f = new Float32Array(1);
    for (let k = -2; k <= 258; k++) {
      for (const base of [k, k + 0.5]) {
        for (const step of [-1, 0, 1]) {
          f[0] = base;
          const u = new Uint32Array(f.buffer);
          if (base !== 0) u[0] += step;
          const x = f[0];
          expect(roundLevel(x)).toBe(Math.min(255, Math.max(0, Math.round(x))));
        }
      }
    }
    expect(Array.from(roundLuminance(Float32Array.of(1.4, 1.6, 2.5)))).toEqual([1, 2, 3]);
  });

  it('the TypeScript reference compares rounded luminance for sad/ssd (same map as on pre-rounded images)', () => {
    // By construction of blockMatch: rounding happens before the cost slices.
    const img = makeImages(2, 48, 32, 3);
    const input = { ...img, minDisparity: 0, maxDisparity: 12 };
    const rounded = { ...input, left: roundLuminance(img.left), right: roundLuminance(img.right) };
    for (const cost of ['sad', 'ssd']) {
      const a = blockMatch(input, { cost, window: 5, kernel: 'ts' });
      const b = blockMatch(rounded, { cost, window: 5, kernel: 'ts' });
      expect(firstDiff(a, b)).toBe(-1);
    }
  });

  it('equals the TypeScript reference bit for bit on random images (windows, costs, ranges, LR, subpixel, uniqueness)', () => {
    // Property test; the reference is the TypeScript kernel. Windows cover both lane types
    // (u16 for SAD up to 15, i32 for SAD above 15 and for SSD), ranges include negative
    // minimums, single levels, ranges wider than the image and fractional ends.
    fc.assert(
      fc.property(
        fc.record({
          kind: fc.integer({ min: 0, max: 2 }),
          width: fc.integer({ min: 1, max: 72 }),
          height: fc.integer({ min: 1, max: 30 }),
          seed: fc.integer({ min: 1, max: 1_000_000 }),
          cost: fc.constantFrom('sad', 'ssd'),
          window: fc.constantFrom(1, 3, 5, 9, 15, 17, 23),
          minD: fc.integer({ min: -40, max: 20 }),
          span: fc.integer({ min: 0, max: 60 }),
          frac: fc.boolean(),
          lr: fc.constantFrom(0, 1, 2.5),
          subpix: fc.boolean(),
          uniq: fc.constantFrom(0, 0, 10, 40),
        }),
        (c) => {
          const img = makeImages(c.kind, c.width, c.height, c.seed);
          const minD = c.frac ? c.minD - 0.5 : c.minD;
          const maxD = c.frac ? c.minD + c.span + 0.5 : c.minD + c.span;
          const { w, t, used } = both(img, minD, maxD, {
            cost: c.cost,
            window: c.window,
            lr: c.lr,
            subpix: c.subpix,
            uniq: c.uniq,
          });
          // The wasm kernel ran unless no level has a candidate (|d| >= width for all levels).
          const lo = Math.ceil(minD);
          const hi = Math.floor(maxD);
          if (Math.max(lo, -(c.width - 1)) <= Math.min(hi, c.width - 1)) expect(used).toBe('wasm');
          expect(firstDiff(w, t)).toBe(-1);
        },
      ),
      { numRuns: 150, seed: 20261202 },
    );
  });

  it('equals the reference with a large window (51), at the lane limits, and on an image-sized pair', () => {
    // Extreme images (0 / 255 only) maximise window sums: SAD 51x51 reaches 663,255 and
    // SSD 169,130,025 (the kernel's overflow proof); SAD 15x15 reaches 57,375, just below the
    // u16 marker 65535. The reference sums in float64 (exact), so any wrap would show.
    const rnd = mulberry32(77);
    const w = 64;
    const h = 48;
    const extreme = (r: () => number): number => (r() < 0.5 ? 0 : 255);
    const left = randomImage(rnd, w * h, extreme);
    const right = randomImage(rnd, w * h, extreme);
    const img = { width: w, height: h, left, right };
    for (const [cost, window] of [
      ['sad', 15],
      ['sad', 17],
      ['sad', 51],
      ['ssd', 3],
      ['ssd', 51],
    ] as const) {
      const { w: a, t, used } = both(img, -7, 30, { cost, window, lr: 1, subpix: true, uniq: 5 });
      expect(used).toBe('wasm');
      expect(firstDiff(a, t)).toBe(-1);
    }
    // a realistic pair: random-dot stereogram (Julesz 1960), SAD window 9, 33 levels
    const s = randomDotStereogram(160, 120, 3, 12, 5);
    const { w: a, t } = both(s, -4, 28, { cost: 'sad', window: 9 });
    expect(firstDiff(a, t)).toBe(-1);
  });

  it('ties at the largest u16 window sum go to the lowest level (hand example, wta.ts convention)', () => {
    // L = 255 and R = 0 everywhere: every candidate of a 15x15 SAD window costs 225 * 255 = 57375,
    // so each pixel answers its lowest candidate level: d = max(minD, x - (width - 1)), here minD.
    const w = 40;
    const h = 20;
    const input = {
      width: w,
      height: h,
      left: new Float32Array(w * h).fill(255),
      right: new Float32Array(w * h).fill(0),
      minDisparity: 2,
      maxDisparity: 9,
    };
    const d = blockMatch(input, { cost: 'sad', window: 15, lr: 0, subpix: true, kernel: 'wasm' });
    for (let y = 0; y < h; y++)
      for (let x = 0; x < w; x++) {
        // x < 2: x - d < 0 for every d >= 2, no candidate (d = x_left - x_right)
        if (x < 2) expect(d[y * w + x]).toBeNaN();
        else expect(d[y * w + x]).toBe(2);
      }
  });

  it('gives all-NaN when no level has a candidate, as the reference', () => {
    // width 40, levels 50..60: x - d < 0 for every x (hand derivation).
    const img = makeImages(0, 40, 10, 9);
    const { w, t } = both(img, 50, 60, { cost: 'sad', window: 3 });
    expect(Array.from(w).every((v) => Number.isNaN(v))).toBe(true);
    expect(firstDiff(w, t)).toBe(-1);
  });

  it('is what auto picks for sad/ssd; zncc always runs the TypeScript kernel', () => {
    const img = makeImages(2, 40, 24, 11);
    const input = { ...img, minDisparity: 0, maxDisparity: 10 };
    blockMatch(input, { cost: 'sad' });
    expect(blockLastRun.kernel).toBe('wasm');
    const z = blockMatch(input, { cost: 'zncc', window: 5, kernel: 'wasm' });
    expect(blockLastRun.kernel).toBe('ts');
    expect(firstDiff(z, blockMatch(input, { cost: 'zncc', window: 5, kernel: 'ts' }))).toBe(-1);
    // the parameter is declared with the choices auto | wasm | ts
    const spec = blockMatcher.params.find((p) => p.name === 'kernel');
    expect(spec && spec.type === 'enum' ? [...spec.values].sort() : []).toEqual(['auto', 'ts', 'wasm']);
  });

  it('throws AbortedError when the signal is aborted (the match rejects)', async () => {
    const img = makeImages(0, 32, 16, 4);
    const ac = new AbortController();
    ac.abort();
    await expect((async () =>
      blockMatcher.match({ ...img, minDisparity: 0, maxDisparity: 8 }, { kernel: 'wasm' }, ac.signal)
    )()).rejects.toThrow(AbortedError);
  });
});
