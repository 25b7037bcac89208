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
