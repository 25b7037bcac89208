/**
 * SGM on a random-dot stereogram (Julesz 1960/1971: a stereogram of random dots has
 * no monocular cue, so recovering the hidden square's disparity proves matching).
 * Built in the test by test/matchers/block-rds.ts with a seeded PRNG; truth and
 * occlusion are known by construction.
 */
import { describe, expect, it } from 'vitest';
import { sgmMatch } from '../../matchers/sgm/index.js';
import { randomDotStereogram, scoringMask, shareCorrect } from './block-rds.js';

describe('sgm on a random-dot stereogram', () => {
  const s = randomDotStereogram(128, 96, 4, 12, 2024);
  // away from the border (census half-window 4 px + 2) and 2 px from occlusions and jumps
  const mask = scoringMask(s, 6, 2);
  const input = { width: s.width, height: s.height, left: s.left, right: s.right, minDisparity: 0, maxDisparity: 23 };

  for (const [label, params] of [
    ['census, 8 paths, wasm', { kernel: 'wasm' }],
    ['census, 4 paths, ts', { kernel: 'ts', paths: '4' }],
    ['BT, 8 paths, P2 lowered across edges (k = 16)', { cost: 'bt', p2edge: 16 }],
  ] as const) {
    it(`recovers >= 99% of the scored pixels within 0.5 px (${label})`, async () => {
      const d = await sgmMatch(input, params, new AbortController().signal);
      const share = shareCorrect(d, s, mask, 0.5);
      expect(share).toBeGreaterThanOrEqual(0.99); // Julesz-type RDS: the task's acceptance level
    });
  }

  it('handles a negative, inclusive disparity range (d = x_left - x_right may be < 0)', async () => {
    // the range [-8, 15] holds both true disparities (4 and 12) and negative levels
    const d = await sgmMatch({ ...input, minDisparity: -8, maxDisparity: 15 }, {}, new AbortController().signal);
    expect(shareCorrect(d, s, mask, 0.5)).toBeGreaterThanOrEqual(0.99);
    // a range that excludes the square's disparity 12 cannot recover it
    const e = await sgmMatch({ ...input, minDisparity: -8, maxDisparity: 8 }, {}, new AbortController().signal);
    expect(shareCorrect(e, s, mask, 0.5)).toBeLessThan(0.9);
  });
});

describe('sgm edge cases', () => {
  it('answers on tiny images and single-level ranges without crashing', async () => {
    // common practice: degenerate sizes must not break a matcher
    for (const [w, h, lo, hi] of [[1, 1, 0, 0], [3, 2, -5, 5], [9, 1, 0, 3], [2, 7, 1, 1]]) {
      const n = w * h;
      const img = Float32Array.from({ length: n }, (_, i) => (i * 37) % 255);
      for (const kernel of ['wasm', 'ts']) {
        const d = await sgmMatch({ width: w, height: h, left: img, right: img, minDisparity: lo, maxDisparity: hi }, { kernel });
        expect(d.length).toBe(n);
        for (const v of d) {
          if (Number.isNaN(v)) continue;
          expect(v).toBeGreaterThanOrEqual(lo - 0.5); // subpixel offsets stay within half a level
          expect(v).toBeLessThanOrEqual(hi + 0.5);
        }
      }
    }
  });

  it('rejects p1 > p2 as a usage error naming the option', async () => {
    const img = new Float32Array(16);
    await expect(sgmMatch({ width: 4, height: 4, left: img, right: img, minDisparity: 0, maxDisparity: 3 }, { p1: 50, p2: 10 })).rejects.toThrow(/--matcher: sgm: p1=50 must not exceed p2=10/);
  });
});
