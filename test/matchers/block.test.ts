import { describe, expect, it } from 'vitest';
import { AbortedError, MatcherFailure } from '../../src/core/errors.js';
import { blockCostSlice, createBlockScratch, type BlockCostKind } from '../../matchers/block/cost.js';
import { blockMatch, blockMatcher } from '../../matchers/block/index.js';
import { mulberry32, randomDotStereogram, scoringMask, shareCorrect } from './block-rds.js';

/** Two independent random images of whole grey levels (seeds a and b). */
function randomPair(w: number, h: number, a: number, b: number): { w: number; h: number; L: Float32Array; R: Float32Array } {
  return { w, h, L: randomInts(w * h, a), R: randomInts(w * h, b) };
}

function randomInts(n: number, seed: number): Float32Array {
  const rnd = mulberry32(seed);
  const a = new Float32Array(n);
  for (let i = 0; i < n; i++) a[i] = Math.floor(rnd() * 256);
  return a;
}

const clamp = (v: number, lo: number, hi: number) => (v < lo ? lo : v > hi ? hi : v);

describe('SAD / SSD cost slices', () => {
  const w = 21;
  const h = 14;
  const L = randomInts(w * h, 1);
  const R = randomInts(w * h, 2);
  for (const kind of ['sad', 'ssd'] as const) {
    for (const r of [0, 1, 3]) {
      it(`${kind}, window ${2 * r + 1}: equals a naive window loop (exact on integer images)`, () => {
        const s = createBlockScratch(kind, L, R, w, h, r);
        const out = new Float64Array(w * h);
        const e = (a: number, b: number) => (kind === 'sad' ? Math.abs(a - b) : (a - b) * (a - b));
        for (const d of [-3, 0, 4]) {
          blockCostSlice(s, L, R, d, out);
          for (let y = 0; y < h; y++) {
            for (let x = 0; x < w; x++) {
              // Textbook window sum: sum over the window of e(L(x+i, y+j), R(x+i-d, y+j)),
              // with the documented replicate rule where the window leaves the image
              // (left window coordinates clamped, then the right x clamped).
              let ref = 0;
              for (let j = -r; j <= r; j++) {
                for (let i = -r; i <= r; i++) {
                  const xx = clamp(x + i, 0, w - 1);
                  const yy = clamp(y + j, 0, h - 1);
                  ref += e(L[yy * w + xx], R[yy * w + clamp(xx - d, 0, w - 1)]);
                }
              }
              expect(out[y * w + x]).toBe(ref);
            }
          }
        }
      });
    }
  }
});

describe('ZNCC', () => {
  const { w, h, L, R } = randomPair(24, 16, 3, 4);

  it('equals 1 - ZNCC computed from the definition with window means, away from borders', () => {
    const r = 2;
    const s = createBlockScratch('zncc', L, R, w, h, r);
    const out = new Float64Array(w * h);
    for (const d of [0, 3]) {
      blockCostSlice(s, L, R, d, out);
      for (let y = r; y < h - r; y++) {
        for (let x = r + d; x < w - r; x++) {
          // ZNCC = sum (I - mI)(J - mJ) / sqrt(sum (I - mI)^2 sum (J - mJ)^2) (definition).
          let mi = 0;
          let mj = 0;
          const N = (2 * r + 1) ** 2;
          for (let j = -r; j <= r; j++)
            for (let i = -r; i <= r; i++) {
              mi += L[(y + j) * w + x + i];
              mj += R[(y + j) * w + x + i - d];
            }
          mi /= N;
          mj /= N;
          let sij = 0;
          let sii = 0;
          let sjj = 0;
          for (let j = -r; j <= r; j++)
            for (let i = -r; i <= r; i++) {
              const a = L[(y + j) * w + x + i] - mi;
              const b = R[(y + j) * w + x + i - d] - mj;
              sij += a * b;
              sii += a * a;
              sjj += b * b;
            }
          expect(Math.abs(out[y * w + x] - (1 - sij / Math.sqrt(sii * sjj)))).toBeLessThan(1e-9);
        }
      }
    }
  });

  it('equals the definition at every candidate, edges included, under the documented replicate rule', () => {
    // Window pixels: left (clamp(x+i), clamp(y+j)), right x = clamp(clamp(x+i) - d); ZNCC from
    // window means as above. Only candidates (0 <= x - d < width) carry a meaningful cost.
    const r = 3;
    const s = createBlockScratch('zncc', L, R, w, h, r);
    const out = new Float64Array(w * h);
    for (const d of [-5, 0, 2, 9]) {
      blockCostSlice(s, L, R, d, out);
      for (let y = 0; y < h; y++) {
        for (let x = Math.max(0, d); x < Math.min(w, w + d); x++) {
          const a: number[] = [];
          const b: number[] = [];
          for (let j = -r; j <= r; j++)
            for (let i = -r; i <= r; i++) {
              const xx = clamp(x + i, 0, w - 1);
              const yy = clamp(y + j, 0, h - 1);
              a.push(L[yy * w + xx]);
              b.push(R[yy * w + clamp(xx - d, 0, w - 1)]);
            }
          const ma = a.reduce((u, v) => u + v, 0) / a.length;
          const mb = b.reduce((u, v) => u + v, 0) / b.length;
          let sab = 0;
          let saa = 0;
          let sbb = 0;
          for (let k = 0; k < a.length; k++) {
            sab += (a[k] - ma) * (b[k] - mb);
            saa += (a[k] - ma) ** 2;
            sbb += (b[k] - mb) ** 2;
          }
          expect(Math.abs(out[y * w + x] - (1 - sab / Math.sqrt(saa * sbb)))).toBeLessThan(1e-9);
        }
      }
    }
  });

  it('gives the same costs and disparities when an image becomes a*I + b, a > 0 (property of ZNCC)', () => {
    const r = 3;
    const s = randomDotStereogram(64, 48, 2, 7, 9);
    const input = { width: 64, height: 48, left: s.left, right: s.right, minDisparity: 0, maxDisparity: 10 };
    // Integer WTA: identical maps. With the subpixel fit the costs' last-bit rounding
    // (~1e-12) may move float32 answers by an ulp, so those are compared to 1e-5 px.
    const ref = blockMatch(input, { cost: 'zncc', window: 7, subpix: false });
    const refSub = blockMatch(input, { cost: 'zncc', window: 7, subpix: true });
    const scratch = createBlockScratch('zncc', s.left, s.right, 64, 48, r);
    const a0 = new Float64Array(64 * 48);
    const a1 = new Float64Array(64 * 48);
    for (const [a, b] of [
      [2, 10],
      [0.5, -3],
      [3.7, 0.25],
    ]) {
      const right2 = s.right.map((v) => a * v + b);
      const left2 = s.left.map((v) => (a / 2) * v + 2 * b);
      const got = blockMatch({ ...input, left: left2, right: right2 }, { cost: 'zncc', window: 7, subpix: false });
      expect(list(got)).toEqual(list(ref));
      const gotSub = blockMatch({ ...input, left: left2, right: right2 }, { cost: 'zncc', window: 7, subpix: true });
      for (let p = 0; p < gotSub.length; p++) {
        if (Number.isNaN(refSub[p])) expect(gotSub[p]).toBeNaN();
        else expect(Math.abs(gotSub[p] - refSub[p])).toBeLessThan(1e-5);
      }
      const scratch2 = createBlockScratch('zncc', left2, right2, 64, 48, r);
      for (const d of [0, 2, 7]) {
        blockCostSlice(scratch, s.left, s.right, d, a0);
        blockCostSlice(scratch2, left2, right2, d, a1);
        let worst = 0;
        for (let p = 0; p < a0.length; p++) worst = Math.max(worst, Math.abs(a0[p] - a1[p]));
        expect(worst).toBeLessThan(1e-5);
      }
    }
  });

  it('treats a flat window as uncorrelated (cost 1)', () => {
    const flat = new Float32Array(9 * 9).fill(80);
    const other = randomInts(81, 5);
    const s = createBlockScratch('zncc', flat, other, 9, 9, 1);
    const out = new Float64Array(81);
    blockCostSlice(s, flat, other, 0, out);
    expect(out.every((v) => v === 1)).toBe(true);
  });
});

function list(a: Float32Array): (number | string)[] {
  return Array.from(a, (v) => (Number.isNaN(v) ? 'NaN' : v));
}

describe('block matcher on a random-dot stereogram (Julesz 1960)', () => {
  // Correct = finite and |d - truth| <= 1 px (common practice), scored away from the image
  // border, occlusions and within the window radius of the square's edges (see block-rds.ts).
  const s = randomDotStereogram(128, 96, 3, 11, 7);
  const cases: { cost: BlockCostKind; window: number }[] = [
    { cost: 'sad', window: 9 },
    { cost: 'ssd', window: 7 },
    { cost: 'zncc', window: 9 },
  ];
  for (const { cost, window } of cases) {
    it(`${cost}, window ${window}: >= 99% correct within 1 px, also within 0.5 px with subpixel`, () => {
      const r = (window - 1) >> 1;
      const mask = scoringMask(s, 16, r);
      const d = blockMatch(
        { width: s.width, height: s.height, left: s.left, right: s.right, minDisparity: -2, maxDisparity: 16 },
        { cost, window },
      );
      expect(shareCorrect(d, s, mask, 1)).toBeGreaterThanOrEqual(0.99);
      // Integer-disparity scene: the parabola must not push the answer past half a pixel.
      expect(shareCorrect(d, s, mask, 0.5)).toBeGreaterThanOrEqual(0.99);
      // Every visible pixel, borders and edges of the square included: the loss there is
      // bounded by the window's reach (measured 98.8-99.3% on this scene; bound is ours).
      const visible = Uint8Array.from(s.occluded, (o) => 1 - o);
      expect(shareCorrect(d, s, visible, 1)).toBeGreaterThanOrEqual(0.98);
    });
  }

  it('recovers negative disparities over a range that crosses zero', () => {
    const n = randomDotStereogram(96, 72, -4, 3, 21);
    const mask = scoringMask(n, 12, 4);
    const d = blockMatch(
      { width: 96, height: 72, left: n.left, right: n.right, minDisparity: -8, maxDisparity: 6 },
      { cost: 'sad', window: 9 },
    );
    expect(shareCorrect(d, n, mask, 1)).toBeGreaterThanOrEqual(0.99);
  });

  it('left-right check leaves the occluded band without answers', () => {
    // The wall strip left of the square (width d2 - d1 = 8 px) is hidden in the right view;
    // it has no true match, so the check should reject most of it (common practice).
    const d = blockMatch(
      { width: s.width, height: s.height, left: s.left, right: s.right, minDisparity: 0, maxDisparity: 16 },
      { cost: 'sad', window: 5, lr: 1 },
    );
    let occ = 0;
    let rejected = 0;
    const { x0, y0, y1 } = s.square;
    for (let y = y0 + 3; y < y1 - 3; y++) {
      for (let x = x0 - 8; x < x0 - 2; x++) {
        occ++;
        if (Number.isNaN(d[y * s.width + x])) rejected++;
      }
    }
    expect(rejected / occ).toBeGreaterThan(0.8);
  });
});

describe('block matcher: range, excluded candidates, abort, schema', () => {
  const { w, h, L, R } = randomPair(40, 12, 8, 9);

  it('never answers a disparity whose match falls outside the right image (d = x_left - x_right)', () => {
    const d = blockMatch(
      { width: w, height: h, left: L, right: R, minDisparity: 5, maxDisparity: 20 },
      { cost: 'sad', window: 3, lr: 0, subpix: false },
    );
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const v = d[y * w + x];
        if (x < 5) expect(v).toBeNaN(); // no candidate at all: x - 5 < 0
        else {
          expect(v).toBeGreaterThanOrEqual(5);
          expect(v).toBeLessThanOrEqual(Math.min(20, x)); // x - d >= 0
        }
      }
    }
  });

  it('a range wider than the image still works and an empty range is a MatcherFailure', () => {
    const d = blockMatch({ width: w, height: h, left: L, right: R, minDisparity: -100, maxDisparity: 100 }, {});
    expect(d.length).toBe(w * h);
    expect(() => blockMatch({ width: w, height: h, left: L, right: R, minDisparity: 3, maxDisparity: 2 }, {})).toThrow(
      MatcherFailure,
    );
    expect(() =>
      blockMatch({ width: w, height: h, left: L, right: R.subarray(1), minDisparity: 0, maxDisparity: 2 }, {}),
    ).toThrow(MatcherFailure);
  });

  it('handles degenerate image shapes (1x1, one row, one column) without crashing', () => {
    // By construction: a 1-pixel image can only match at d = 0; a single column likewise.
    for (const [cw, ch] of [
      [1, 1],
      [7, 1],
      [1, 6],
    ]) {
      const a = randomInts(cw * ch, 30);
      const b = randomInts(cw * ch, 31);
      const d = blockMatch(
        { width: cw, height: ch, left: a, right: b, minDisparity: -3, maxDisparity: 3 },
        { cost: 'zncc', window: 5, lr: 0 },
      );
      expect(d.length).toBe(cw * ch);
      for (let p = 0; p < d.length; p++) {
        const x = p % cw;
        // every answer is a candidate: 0 <= x - d < width (d = x_left - x_right)
        expect(x - d[p]).toBeGreaterThanOrEqual(-0.5);
        expect(x - d[p]).toBeLessThanOrEqual(cw - 1 + 0.5);
      }
      if (cw === 1) expect(Array.from(d).every((v) => v === 0)).toBe(true);
    }
  });

  it('rounds a fractional range inward to whole levels', () => {
    // [0.5, 2.5] -> levels 1 and 2 only (kernels/range.ts); subpixel off, no LR check.
    const d = blockMatch(
      { width: w, height: h, left: L, right: R, minDisparity: 0.5, maxDisparity: 2.5 },
      { subpix: false, lr: 0 },
    );
    for (let p = 0; p < d.length; p++) {
      if (p % w === 0) expect(d[p]).toBeNaN(); // x = 0 has no candidate at d >= 1
      else expect([1, 2]).toContain(d[p]);
    }
  });

  it('throws AbortedError when the signal is aborted (the match rejects)', async () => {
    const ac = new AbortController();
    ac.abort();
    await expect((async () =>
      blockMatcher.match({ width: w, height: h, left: L, right: R, minDisparity: 0, maxDisparity: 8 }, {}, ac.signal)
    )()).rejects.toThrow(AbortedError);
  });
});

describe('strips (kernels/slices.ts)', () => {
  it('give exactly the whole-image result for any strip height (halo rows replicate the image borders)', () => {
    // Reference: the same matcher run as one strip covering the image (stripRows = height).
    const s = randomDotStereogram(48, 37, 2, 6, 13);
    const input = { width: 48, height: 37, left: s.left, right: s.right, minDisparity: -1, maxDisparity: 9 };
    for (const cost of ['sad', 'zncc'] as const) {
      // kernel 'ts': strips belong to the TypeScript kernel (the wasm kernel works row by row)
      const params = { cost, window: 7, uniq: 5, lr: 1, kernel: 'ts' };
      const whole = list(blockMatch(input, params, undefined, { stripRows: 37 }));
      for (const rows of [1, 5, 16, 36]) expect(list(blockMatch(input, params, undefined, { stripRows: rows }))).toEqual(whole);
    }
  });
});
