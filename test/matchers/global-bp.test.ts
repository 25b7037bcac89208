/**
 * The `bp` matcher: loopy min-sum belief propagation after Felzenszwalb & Huttenlocher
 * (IJCV 2006).
 */
import { describe, expect, it } from 'vitest';
import { coarsenData, sendMessage } from '../../matchers/global/bp.js';
import { bpMatch } from '../../matchers/global/index.js';
import { mulberry32, randomDotStereogram, scoringMask, shareCorrect } from './block-rds.js';

describe('bp message update', () => {
  it('equals the brute-force min over d\' of h(d\') + V(d - d\') (FH 2006, eq. 2 and sec. 2.1)', () => {
    const rnd = mulberry32(5);
    const scratch = new Float32Array(64);
    for (let t = 0; t < 30; t++) {
      const L = 2 + Math.floor(rnd() * 40);
      const h = Float32Array.from({ length: L }, () => Math.floor(rnd() * 100));
      const excl = Float32Array.from({ length: L }, () => Math.floor(rnd() * 20));
      const smooth = 1 + Math.floor(rnd() * 10);
      const trunc = Math.floor(rnd() * 60);
      for (const linear of [true, false]) {
        const out = new Float32Array(L);
        sendMessage(h, excl, 0, out, 0, L, smooth, trunc, linear, scratch);
        // brute force, O(L^2), straight from the definition, then minus its minimum
        const want: number[] = [];
        for (let d = 0; d < L; d++) {
          let m = Infinity;
          for (let e = 0; e < L; e++) {
            const V = linear ? Math.min(smooth * Math.abs(d - e), trunc) : d === e ? 0 : trunc;
            m = Math.min(m, h[e] - excl[e] + V);
          }
          want.push(m);
        }
        const mn = Math.min(...want);
        expect(Array.from(out)).toEqual(want.map((v) => v - mn));
      }
    }
  });

  it('sums 2x2 blocks for the coarser scale (FH 2006, sec. 3.3), odd sizes included', () => {
    // 3x3 image, 2 levels, values worked by hand
    const data = Float32Array.from([
      1, 10, 2, 20, 3, 30,
      4, 40, 5, 50, 6, 60,
      7, 70, 8, 80, 9, 90,
    ]);
    const c = coarsenData(data, 3, 3, 2);
    expect([c.width, c.height]).toEqual([2, 2]);
    // (0,0): 1+2+4+5 = 12 and 120; (1,0): 3+6 = 9, 90; (0,1): 7+8 = 15, 150; (1,1): 9, 90
    expect(Array.from(c.data)).toEqual([12, 120, 9, 90, 15, 150, 9, 90]);
  });
});

describe('bp on a random-dot stereogram', () => {
  // Julesz (1960): random dots carry no monocular cue; the square is seen only by matching.
  const s = randomDotStereogram(128, 96, 4, 12, 2024);
  const mask = scoringMask(s, 6, 2);
  const input = { width: s.width, height: s.height, left: s.left, right: s.right, minDisparity: 0, maxDisparity: 23 };
  for (const [label, params] of [
    ['census data, truncated linear', {}],
    ['BT data, Potts', { cost: 'bt', model: 'potts' }],
  ] as const) {
    it(`recovers >= 99% of the scored pixels within 0.5 px (${label})`, () => {
      const d = bpMatch(input, params, new AbortController().signal);
      expect(shareCorrect(d, s, mask, 0.5)).toBeGreaterThanOrEqual(0.99);
    });
  }

  it('stops when aborted', () => {
    const ac = new AbortController();
    ac.abort();
    expect(() => bpMatch(input, {}, ac.signal)).toThrow(/abort/);
  });

  it('smooths: without the pairwise term (trunc 0) it is worse on a noisy pair', () => {
    // add noise to the right image; pixel-wise WTA suffers, BP's smoothness helps
    const rnd = mulberry32(77);
    const noisy = s.right.map((v) => v + (rnd() - 0.5) * 120);
    const inp = { ...input, right: noisy };
    const smooth = shareCorrect(bpMatch(inp, { cost: 'bt' }, new AbortController().signal), s, mask, 0.5);
    const none = shareCorrect(bpMatch(inp, { cost: 'bt', trunc: 0 }, new AbortController().signal), s, mask, 0.5);
    expect(smooth).toBeGreaterThan(none + 0.05); // common practice: the prior must pay off on noise
  });
});

describe('bp edge cases', () => {
  it('answers on tiny images and single-level ranges without crashing', () => {
    // common practice: degenerate sizes must not break a matcher
    for (const [w, h, lo, hi] of [[1, 1, 0, 0], [3, 2, -5, 5], [9, 1, 0, 3], [2, 7, 1, 1]]) {
      const img = Float32Array.from({ length: w * h }, (_, i) => (i * 37) % 255);
      const d = bpMatch({ width: w, height: h, left: img, right: img, minDisparity: lo, maxDisparity: hi }, {});
      expect(d.length).toBe(w * h);
      for (const v of d) {
        if (Number.isNaN(v)) continue;
        expect(v).toBeGreaterThanOrEqual(lo - 0.5);
        expect(v).toBeLessThanOrEqual(hi + 0.5);
      }
    }
  });
});
