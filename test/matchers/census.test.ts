import { describe, expect, it } from 'vitest';
import { AbortedError } from '../../src/core/errors.js';
import { censusMatch, censusMatcher } from '../../matchers/census/index.js';
import { randomDotStereogram, scoringMask, shareCorrect } from './block-rds.js';

const list = (a: Float32Array) => Array.from(a, (v) => (Number.isNaN(v) ? 'NaN' : v));

describe('census matcher on a random-dot stereogram (Julesz 1960)', () => {
  // Correct = finite and |d - truth| <= 1 px (common practice), scored away from the image
  // border, occlusions and within the window's reach of the square's edges (block-rds.ts).
  const s = randomDotStereogram(128, 96, 3, 11, 7);
  const input = { width: 128, height: 96, left: s.left, right: s.right, minDisparity: -2, maxDisparity: 16 };

  it('default parameters: >= 99% correct within 1 px and within 0.5 px', () => {
    // Reach of a pixel's cost: census half-width 4 + aggregation radius 2 = 6 px.
    const mask = scoringMask(s, 16, 6);
    const d = censusMatch(input, {});
    expect(shareCorrect(d, s, mask, 1)).toBeGreaterThanOrEqual(0.99);
    expect(shareCorrect(d, s, mask, 0.5)).toBeGreaterThanOrEqual(0.99);
    // Every visible pixel, borders and edges of the square included (measured 99.3%; bound is ours).
    const visible = Uint8Array.from(s.occluded, (o) => 1 - o);
    expect(shareCorrect(d, s, visible, 1)).toBeGreaterThanOrEqual(0.98);
  });

  // Without aggregation (window 1) about 1% of pixels fail here: a centre darker than all of
  // its neighbours has an all-zero string wherever it is, so such pixels tie at Hamming 0
  // (measured 98.98% on this scene); a 3x3 aggregation resolves it.
  it('7x7 census, window 3: >= 99% correct within 1 px', () => {
    const mask = scoringMask(s, 16, 4);
    const d = censusMatch(input, { censusW: 7, censusH: 7, window: 3 });
    expect(shareCorrect(d, s, mask, 1)).toBeGreaterThanOrEqual(0.99);
  });

  it('negative disparities over a range that crosses zero', () => {
    const n = randomDotStereogram(96, 72, -4, 3, 21);
    const mask = scoringMask(n, 12, 6);
    const d = censusMatch({ width: 96, height: 72, left: n.left, right: n.right, minDisparity: -8, maxDisparity: 6 }, {});
    expect(shareCorrect(d, n, mask, 1)).toBeGreaterThanOrEqual(0.99);
  });

  it('output is identical under any strictly increasing intensity change (property of the census transform)', () => {
    // Census compares intensities only by order, so costs and hence every stage after them
    // are unchanged; the change may differ between the two cameras (gain, gamma, offset).
    const ref = censusMatch(input, { speckle: 20 });
    const f = (v: number) => Math.sqrt(v) * 13 + 2;
    const g = (v: number) => 0.4 * v + 50;
    const got = censusMatch({ ...input, left: s.left.map(f), right: s.right.map(g) }, { speckle: 20 });
    expect(list(got)).toEqual(list(ref));
    // Sanity that the comparison can fail: a non-monotonic change (intensity folded at 128) alters it.
    const h = (v: number) => (v < 128 ? v : 255 - v);
    const bent = censusMatch({ ...input, left: s.left.map(h), right: s.right }, { speckle: 20 });
    expect(list(bent)).not.toEqual(list(ref));
  });
});

describe('census matcher: abort and schema', () => {
  it('throws AbortedError when the signal is aborted (the match rejects)', async () => {
    const ac = new AbortController();
    ac.abort();
    const s = randomDotStereogram(32, 24, 1, 3, 1);
    await expect((async () =>
      censusMatcher.match(
        { width: 32, height: 24, left: s.left, right: s.right, minDisparity: 0, maxDisparity: 4 },
        {},
        ac.signal,
      )
    )()).rejects.toThrow(AbortedError);
  });
});

describe('strips (kernels/slices.ts)', () => {
  it('give exactly the whole-image result for any strip height', () => {
    // Reference: the same matcher run as one strip covering the image (stripRows = height).
    const s = randomDotStereogram(48, 37, 2, 6, 13);
    const input = { width: 48, height: 37, left: s.left, right: s.right, minDisparity: -1, maxDisparity: 9 };
    const whole = list(censusMatch(input, { window: 7 }, undefined, { stripRows: 37 }));
    for (const rows of [1, 4, 20]) expect(list(censusMatch(input, { window: 7 }, undefined, { stripRows: rows }))).toEqual(whole);
  });
});
