import { describe, expect, it } from 'vitest';
import {
  POSTPROCESS_PARAMS,
  applyPostprocess,
  fillHoles,
  leftRightCheck,
  readPostprocess,
  removeSpeckles,
  subpixelParabola,
} from '../../matchers/kernels/postprocess.js';

const N = NaN;
const arr = (a: number[]) => Float32Array.from(a);
const list = (a: Float32Array) => Array.from(a, (v) => (Number.isNaN(v) ? 'NaN' : v));

describe('subpixelParabola', () => {
  it('returns the vertex of the parabola through three points', () => {
    // c(t) = 2 (t - 0.25)^2 + 1 sampled at t = -1, 0, 1: 4.125, 1.125, 2.125 (by hand);
    // vertex offset (cm - cp) / (2 (cm - 2 c0 + cp)) = 2 / (2 * 4) = 0.25 (standard algebra).
    expect(subpixelParabola(4.125, 1.125, 2.125)).toBe(0.25);
    expect(subpixelParabola(2.125, 1.125, 4.125)).toBe(-0.25);
  });
  it('clamps to ±0.5 and gives 0 for flat, concave or open-ended costs', () => {
    // (10 - 0.5) / (2 (10 - 2 + 0.5)) = 9.5 / 17 > 0.5 -> 0.5 (by hand)
    expect(subpixelParabola(10, 1, 0.5)).toBe(0.5);
    expect(subpixelParabola(0.5, 1, 10)).toBe(-0.5);
    expect(subpixelParabola(3, 3, 3)).toBe(0); // zero curvature
    expect(subpixelParabola(1, 3, 2)).toBe(0); // concave: not a minimum
    expect(subpixelParabola(Infinity, 1, 2)).toBe(0); // neighbour excluded
  });
});

describe('leftRightCheck', () => {
  it('keeps consistent pixels and marks the rest (hand-built 8x1 maps)', () => {
    // x:        0    1    2    3    4    5    6    7
    const dL = arr([1, 2, 2, 2.4, 3, N, 2, 9]);
    const dR = arr([2, 2, 2, 3, 1, 5, 2, 2]);
    // x=0: xr = 0 - 1 = -1 outside                       -> NaN
    // x=1: xr = -1 outside                               -> NaN
    // x=2: xr = 0, dR = 2, |2 - 2| = 0                   -> keep
    // x=3: xr = 3 - round(2.4) = 1, dR = 2, |0.4| <= 1   -> keep
    // x=4: xr = 1, dR = 2, |3 - 2| = 1, not > 1          -> keep
    // x=5: NaN stays NaN
    // x=6: xr = 4, dR = 1, |2 - 1| = 1                   -> keep
    // x=7: xr = -2 outside                               -> NaN
    leftRightCheck(dL, dR, 8, 1, 1);
    expect(list(dL)).toEqual(['NaN', 'NaN', 2, list(arr([2.4]))[0], 3, 'NaN', 2, 'NaN']);
    // With maxDiff 0.5, x=4 and x=6 (difference exactly 1) fail; x=3 (0.4) stays.
    const dL2 = arr([1, 2, 2, 2.4, 3, N, 2, 9]);
    leftRightCheck(dL2, dR, 8, 1, 0.5);
    expect(list(dL2)).toEqual(['NaN', 'NaN', 2, list(arr([2.4]))[0], 'NaN', 'NaN', 'NaN', 'NaN']);
    // The confidence it gives (the built-ins' confidence map): -|dL - dR| where kept, NaN elsewhere.
    const dL3 = arr([1, 2, 2, 2.4, 3, N, 2, 9]);
    const conf = new Float32Array(8);
    leftRightCheck(dL3, dR, 8, 1, 1, conf);
    expect(list(conf)).toEqual(['NaN', 'NaN', -0, list(arr([-Math.abs(Math.fround(2.4) - 2)]))[0], -1, 'NaN', -1, 'NaN']);
  });
  it('marks a pixel whose right partner has no answer, row by row', () => {
    // 3x2: second row's right map is NaN at xr = 1.
    const dL = arr([0, 1, 1, 0, 1, 0]);
    const dR = arr([0, 1, 0, 0, N, 0]);
    leftRightCheck(dL, dR, 3, 2, 1);
    // row 0: x=0 xr=0 ok; x=1 xr=0 dR=0 |1-0|=1 ok; x=2 xr=1 dR=1 ok
    // row 1: x=0 xr=0 ok; x=1 xr=0 ok; x=2 xr=2 dR=0 ok -- then x=4... (by hand)
    expect(list(dL)).toEqual([0, 1, 1, 0, 1, 0]);
    const dL3 = arr([0, 1, 1, 0, 0, 1]);
    leftRightCheck(dL3, dR, 3, 2, 1);
    // row 1, x=1: d 0 -> xr = 1, dR NaN -> NaN; x=2: d 1 -> xr = 1 -> NaN
    expect(list(dL3)).toEqual([0, 1, 1, 0, 'NaN', 'NaN']);
  });
});

describe('removeSpeckles', () => {
  it('removes small blobs of similar disparity only (hand-built 6x5 map)', () => {
    // A 5-disparity background; a 2-pixel blob of 9 (size 2); a single 5.8 that joins the
    // background (|5.8 - 5| <= 1); a 3-pixel blob of 12..12.5 (chained steps <= 1); a NaN.
    // prettier-ignore
    const m = arr([
      5, 5,   5, 5, 5,  5,
      5, 9,   9, 5, 12, 5,
      5, 5, 5.8, 5, 12.5, 5,
      5, 5,   5, N, 12, 5,
      5, 5,   5, 5, 5,  5,
    ]);
    removeSpeckles(m, 6, 5, 2, 1);
    // maxSize 2: the 9-blob (2 px) goes, the 12-blob (3 px) and the background stay.
    // prettier-ignore
    expect(list(m)).toEqual(list(arr([
      5, 5,   5, 5, 5,  5,
      5, N,   N, 5, 12, 5,
      5, 5, 5.8, 5, 12.5, 5,
      5, 5,   5, N, 12, 5,
      5, 5,   5, 5, 5,  5,
    ])));
    removeSpeckles(m, 6, 5, 3, 1);
    expect(list(m).filter((v) => v === 'NaN').length).toBe(2 + 1 + 3);
  });
  it('uses 4-connectivity: diagonal neighbours are separate blobs', () => {
    // Two 1-pixel blobs of 7 touching only at a corner, in a 0 background (by hand).
    // 7 0 0
    // 0 7 0
    // 0 0 0   (the 0s form one 7-pixel blob around them)
    const m = arr([7, 0, 0, 0, 7, 0, 0, 0, 0]);
    removeSpeckles(m, 3, 3, 1, 1);
    expect(list(m)).toEqual(['NaN', 0, 0, 0, 'NaN', 0, 0, 0, 0]);
    // With 8-connectivity they would form a 2-pixel blob and survive maxSize 1; they do not.
    // 7 0
    // 0 7   every pixel is its own 1-pixel blob under 4-connectivity, so all go.
    const v = arr([7, 0, 0, 7]);
    removeSpeckles(v, 2, 2, 1, 1);
    expect(list(v)).toEqual(['NaN', 'NaN', 'NaN', 'NaN']);
  });
  it('maxSize 0 leaves the map alone', () => {
    const m = arr([1, 9, 1]);
    removeSpeckles(m, 3, 1, 0, 1);
    expect(list(m)).toEqual([1, 9, 1]);
  });
});

describe('fillHoles', () => {
  it('fills a row with the farther (lower) neighbour, or linearly (hand-built row)', () => {
    const row = [N, 3, N, N, 7, N, N, 2];
    const a = arr(row);
    fillHoles(a, 8, 1, 'background');
    // run [0]: only a right neighbour 3; run [2,3]: min(3, 7) = 3; run [5,6]: min(7, 2) = 2.
    expect(list(a)).toEqual([3, 3, 3, 3, 7, 2, 2, 2]);
    const b = arr(row);
    fillHoles(b, 8, 1, 'linear');
    // run [2,3] between 3 (x=1) and 7 (x=4): 3 + 4/3, 3 + 8/3; run [5,6] 7 -> 2 (x=7): 7 - 5/3, 7 - 10/3
    const exp = [3, 3, 3 + 4 / 3, 3 + 8 / 3, 7, 7 - 5 / 3, 7 - 10 / 3, 2].map((v) => Math.fround(v));
    expect(list(b)).toEqual(exp);
  });
  it('leaves a row with no valid pixel empty and handles trailing runs', () => {
    const a = arr([N, N, N, 4, N, N]);
    fillHoles(a, 3, 2, 'background');
    expect(list(a)).toEqual(['NaN', 'NaN', 'NaN', 4, 4, 4]);
  });
});

describe('shared parameter block', () => {
  it('has sane defaults inside the declared ranges and unique names', () => {
    const names = POSTPROCESS_PARAMS.map((p) => p.name);
    expect(new Set(names).size).toBe(names.length);
    expect(names).toEqual(['lr', 'subpix', 'uniq', 'speckle', 'speckleDiff', 'fill']);
    for (const p of POSTPROCESS_PARAMS) {
      if (p.type === 'int' || p.type === 'number') {
        expect(p.default).toBeGreaterThanOrEqual(p.min!);
        expect(p.default).toBeLessThanOrEqual(p.max!);
      }
    }
  });
  it('applyPostprocess runs the stages that are on, in order: lr, speckle, fill', () => {
    // dL: x=1 fails the LR check (dR at xr=0 is 4), which leaves a hole; fill then takes min(1, 1).
    const dL = arr([1, 1, 1, 1]);
    const dR = arr([4, 1, 1, 1]);
    const opts = readPostprocess({ lr: 1, fill: true });
    expect(opts).toEqual({ lr: 1, subpix: true, uniq: 0, speckle: 0, speckleDiff: 1, fill: true });
    applyPostprocess(dL, dR, 4, 1, { ...opts, fill: false });
    // x=0: xr=-1 outside -> NaN; x=1: xr=0 -> |1 - 4| > 1 -> NaN; x=2,3 fine.
    expect(list(dL)).toEqual(['NaN', 'NaN', 1, 1]);
    const dL2 = arr([1, 1, 1, 1]);
    applyPostprocess(dL2, dR, 4, 1, opts);
    expect(list(dL2)).toEqual([1, 1, 1, 1]);
    const dL3 = arr([1, 1, 1, 1]);
    applyPostprocess(dL3, dR, 4, 1, { ...opts, lr: 0, fill: false });
    expect(list(dL3)).toEqual([1, 1, 1, 1]);
  });
});
