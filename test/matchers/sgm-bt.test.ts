/**
 * Birchfield–Tomasi dissimilarity (Birchfield & Tomasi, IEEE TPAMI 20(4), 1998),
 * the optional pixel cost of the sgm matcher.
 */
import { describe, expect, it } from 'vitest';
import { btCostRow, btExtremes, btPair } from '../../matchers/kernels/bt.js';

describe('Birchfield–Tomasi dissimilarity', () => {
  // Rows worked by hand from the definition:
  //   IL = [10, 20, 40, 40], IR = [12, 30, 30, 50]
  // Half-sample intervals [min, max] of I-, I, I+ (row ends collapse to the sample):
  //   IL: x0 [10, 15]  x1 [15, 30]  x2 [30, 40]  x3 [40, 40]
  //   IR: x0 [12, 21]  x1 [21, 30]  x2 [30, 40]  x3 [40, 50]
  const IL = new Float32Array([10, 20, 40, 40]);
  const IR = new Float32Array([12, 30, 30, 50]);

  it('computes the interpolation intervals of a row', () => {
    const lo = new Float32Array(4);
    const hi = new Float32Array(4);
    btExtremes(IR, 0, 4, lo, hi);
    expect(Array.from(lo)).toEqual([12, 21, 30, 40]); // worked above
    expect(Array.from(hi)).toEqual([21, 30, 40, 50]);
  });

  it('matches hand-worked values for a short row', () => {
    const minD = -1;
    const maxD = 3;
    const D = maxD - minD + 1;
    const out = new Float32Array(4 * D);
    btCostRow(IL, IR, 0, 4, minD, maxD, -1, out);
    const at = (x: number, d: number) => out[x * D + (d - minD)];
    // xL=1, xR=1: IL 20 vs IR [21,30] -> max(0, 20-30, 21-20) = 1;
    //             IR 30 vs IL [15,30] -> max(0, 30-30, 15-30) = 0; min = 0 (plain |20-30| = 10)
    expect(at(1, 0)).toBe(0);
    // xL=2, xR=0: IL 40 vs [12,21] -> 19; IR 12 vs [30,40] -> 18; min = 18
    expect(at(2, 2)).toBe(18);
    // xL=3, xR=0: IL 40 vs [12,21] -> 19; IR 12 vs [40,40] -> 28; min = 19
    expect(at(3, 3)).toBe(19);
    // xL=3, xR=1: IL 40 vs [21,30] -> 10; IR 30 vs [40,40] -> 10; min = 10
    expect(at(3, 2)).toBe(10);
    // xL=0, xR=1 (d = -1): IL 10 vs [21,30] -> 11; IR 30 vs [10,15] -> 15; min = 11
    expect(at(0, -1)).toBe(11);
    // xL=1, xR=0: IL 20 vs [12,21] -> 0
    expect(at(1, 1)).toBe(0);
    // xL=0, d=1: xR=-1 is outside the row -> the `outside` value
    expect(at(0, 1)).toBe(-1);
    expect(at(3, -1)).toBe(-1);
  });

  it('equals the definition evaluated by dense sampling of the interpolated rows', () => {
    // dbar(xL, xR) = min over x in [xR-1/2, xR+1/2] |IL(xL) - IR^(x)|, IR^ linear between
    // samples (Birchfield & Tomasi 1998, eq. 1); sampled every 1/400 px, which is exact
    // at the interval ends and the sample and within slope/400 elsewhere.
    let s = 12345;
    const rnd = () => ((s = (Math.imul(s, 1103515245) + 12345) >>> 0) / 4294967296) * 255;
    const W = 12;
    const L = Float32Array.from({ length: W }, rnd);
    const R = Float32Array.from({ length: W }, rnd);
    const interp = (row: Float32Array, x: number) => {
      const xc = Math.min(W - 1, Math.max(0, x));
      const i = Math.floor(xc);
      const f = xc - i;
      return i + 1 < W ? row[i] * (1 - f) + row[i + 1] * f : row[i];
    };
    const dbar = (a: Float32Array, xa: number, b: Float32Array, xb: number) => {
      let m = Infinity;
      for (let t = -200; t <= 200; t++) m = Math.min(m, Math.abs(a[xa] - interp(b, xb + t / 400)));
      return m;
    };
    const loL = new Float32Array(W), hiL = new Float32Array(W), loR = new Float32Array(W), hiR = new Float32Array(W);
    btExtremes(L, 0, W, loL, hiL);
    btExtremes(R, 0, W, loR, hiR);
    for (let xl = 0; xl < W; xl++)
      for (let xr = 0; xr < W; xr++) {
        const want = Math.min(dbar(L, xl, R, xr), dbar(R, xr, L, xl));
        const got = btPair(L[xl], loL[xl], hiL[xl], R[xr], loR[xr], hiR[xr]);
        expect(Math.abs(got - want)).toBeLessThan(0.5); // slope <= 255 px^-1, step 1/400
        // the sample itself is inside the interval, so BT <= |IL - IR| (definition)
        expect(got).toBeLessThanOrEqual(Math.abs(L[xl] - R[xr]) + 1e-4);
      }
  });
});
