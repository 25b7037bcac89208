import { describe, expect, it } from 'vitest';
import { deriveOcclusion, occlusionReference, OCCLUDED, OUTSIDE } from '../../src/dataset/occlusion.js';
import { rng } from './helpers.js';

describe('deriveOcclusion', () => {
  it('hand-worked row: a foreground step occludes the background just left of it', () => {
    // width 10, one row. Background d = 2 at x = 0..5, foreground d = 5 at x = 6..9.
    // Right-view positions u = x - d: background x=0..5 -> -2,-1,0,1,2,3;
    // foreground x=6..9 -> 1,2,3,4.
    // x=0: u=-2 < -0.5 -> outside the right frame (2). x=1: u=-1 -> outside (2).
    // x=2: u=0. Occluder needs d_q > 2 + 0.5 and u_q <= 0 + 0.5: foreground u >= 1 -> no. visible.
    // x=3: u=1 -> foreground x=6 has u=1 <= 1.5 -> occluded (1).
    // x=4: u=2 -> x=6 (u=1 <= 2.5) -> occluded. x=5: u=3 -> occluded.
    // Foreground x=6..9: nothing to the right has d > 5.5 -> visible (0).
    const truth = Float32Array.of(2, 2, 2, 2, 2, 2, 5, 5, 5, 5);
    const expected = [OUTSIDE, OUTSIDE, 0, OCCLUDED, OCCLUDED, OCCLUDED, 0, 0, 0, 0];
    expect(Array.from(deriveOcclusion(truth, 10, 1, 0.5, 0.5))).toEqual(expected);
    expect(Array.from(occlusionReference(truth, 10, 1, 0.5, 0.5))).toEqual(expected);
  });

  it('tolerance edge: u_q equal to u_p + tol still occludes (<=), tau is strict (>)', () => {
    // x=0 d=0 (u=0); x=1 d=0.5 (u=0.5). With tol=0.5: u_q=0.5 <= 0+0.5 holds;
    // tau=0.5: d_q = 0.5 > 0 + 0.5 is false -> not occluded. With tau=0.25: 0.5 > 0.25 -> occluded.
    const truth = Float32Array.of(0, 0.5, 0.5, 0.5);
    expect(deriveOcclusion(truth, 4, 1, 0.5, 0.5)[0]).toBe(0);
    expect(deriveOcclusion(truth, 4, 1, 0.5, 0.25)[0]).toBe(OCCLUDED);
    // tol=0.25: u_q=0.5 <= 0.25 false for x=1; x=2 (u=1.5) and x=3 (u=2.5) too -> visible
    expect(deriveOcclusion(truth, 4, 1, 0.25, 0.25)[0]).toBe(0);
  });

  it('slanted plane is not marked occluded (README, "Regions and metrics": unlike rounding a forward warp)', () => {
    // Hand reasoning: on d = a*x + c, q = p + k has d_q - d_p = a*k and u_q - u_p = (1-a)*k.
    // With tol = tau = 0.5 the first k with a*k > 0.5 must have (1-a)*k > 0.5:
    // a=0.3 -> k=2, 1.4 > 0.5; a=0.5 -> k=2, 1.0 > 0.5; a=0.05 -> k=11, 10.45 > 0.5;
    // a <= 0 -> no k at all. So nothing but the outside-frame pixels is marked.
    const w = 120;
    for (const slope of [0.3, -0.3, 0.5, 0.05, -2]) {
      const truth = new Float32Array(w);
      for (let x = 0; x < w; x++) truth[x] = 40 + slope * (x - 60);
      const occ = deriveOcclusion(truth, w, 1, 0.5, 0.5);
      for (let x = 0; x < w; x++) {
        const u = x - truth[x];
        // hand rule: only pixels landing outside [-0.5, w - 0.5] may be marked
        expect(occ[x]).toBe(u < -0.5 || u > w - 0.5 ? OUTSIDE : 0);
      }
    }
  });

  it('a very steep plane (slope 0.9 px/px) IS flagged by the definition, as the rule says', () => {
    // Hand: a=0.9, k=1: d_q - d_p = 0.9 > 0.5 and u_q - u_p = 0.1 <= 0.5 -> occluded; the last
    // pixel of the row has no q to its right -> visible. (Ten left pixels share one right
    // pixel here; the rule treats that compression as occlusion.)
    const w = 30;
    const truth = new Float32Array(w);
    for (let x = 0; x < w; x++) truth[x] = 0.9 * x;
    const occ = deriveOcclusion(truth, w, 1, 0.5, 0.5);
    for (let x = 0; x < w - 1; x++) expect(occ[x]).toBe(OCCLUDED);
    expect(occ[w - 1]).toBe(0);
  });

  it('outside the frame on both edges (negative disparity lands beyond the right edge)', () => {
    // width 5: x=4, d=-1 -> u = 5 > 4.5 -> outside. x=0, d=0.6 -> u=-0.6 < -0.5 -> outside.
    // x=1, d=1.5 -> u=-0.5, not < -0.5 -> inside. x=3, d=-1.5 -> u=4.5, not > 4.5 -> inside.
    const truth = Float32Array.of(0.6, 1.5, NaN, -1.5, -1);
    const occ = deriveOcclusion(truth, 5, 1, 0.5, 0.5);
    expect(occ[0]).toBe(OUTSIDE);
    expect(occ[4]).toBe(OUTSIDE);
    expect(occ[2]).toBe(0); // unknown truth is neither
    expect(occ[3]).toBe(0); // nothing to its right with larger d (x=4 has d=-1 > -1+0.5=-0.5? no)
    // x=1 (d=1.5, u=-0.5): x=3 (d=-1.5) and x=4 (d=-1) are not nearer -> visible
    expect(occ[1]).toBe(0);
  });

  it('invalid truth neither occludes nor is occluded', () => {
    // Without the NaN/Infinity, x=1..2 (d=2) would be occluded by x=3.. (d=8).
    // [d=2, 2, 2, Inf, NaN, 2]: x=0 u=-2 outside; others: no valid q with d > 2.5 -> 0.
    const truth = Float32Array.of(2, 2, 2, Infinity, NaN, 2);
    expect(Array.from(deriveOcclusion(truth, 6, 1, 0.5, 0.5))).toEqual([OUTSIDE, OUTSIDE, 0, 0, 0, 0]);
  });

  it('matches the brute-force O(W^2) definition on random rows (several disparity structures)', () => {
    const r = rng(1234);
    for (let trial = 0; trial < 400; trial++) {
      const w = 1 + Math.floor(r() * (trial % 7 === 0 ? 500 : 160)); // wide rows: many stale front entries
      const h = 1 + Math.floor(r() * 3);
      const truth = new Float32Array(w * h);
      const kind = trial % 5;
      for (let i = 0; i < w * h; i++) {
        const x = i % w;
        let d: number;
        if (kind === 0) d = r() * 40 - 5; // noise, negative values too
        else if (kind === 1) d = Math.floor(r() * 6); // integer ties
        else if (kind === 2) d = (Math.floor(x / 17) % 2 ? 20 : 4) + 0.2 * (x % 17); // steps + slants
        else if (kind === 3) d = 10 + 0.7 * Math.sin(x / 5) * 8; // wavy
        else d = r() < 0.5 ? 3 : 3.5 + Math.floor(r() * 4) * 0.5; // values near tol/tau
        if (r() < 0.05) d = r() < 0.5 ? NaN : Infinity;
        truth[i] = d;
      }
      const tol = [0.5, 0, 1, 0.25, -0.25][trial % 5];
      const tau = [0.5, 0, 1, 0.5][(trial >> 2) % 4];
      const fast = deriveOcclusion(truth, w, h, tol, tau);
      const ref = occlusionReference(truth, w, h, tol, tau);
      expect(Array.from(fast), `trial ${trial}`).toEqual(Array.from(ref));
    }
  });

  it('rejects mismatched sizes (common practice)', () => {
    expect(() => deriveOcclusion(new Float32Array(5), 2, 2, 0.5, 0.5)).toThrow(RangeError);
  });
});
