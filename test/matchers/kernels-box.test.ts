import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { boxSum, boxSumNaive } from '../../matchers/kernels/box.js';
import { mulberry32 } from './block-rds.js';

function randomImage(w: number, h: number, seed: number, integer: boolean): Float64Array {
  const rnd = mulberry32(seed);
  const a = new Float64Array(w * h);
  for (let i = 0; i < a.length; i++) a[i] = integer ? Math.floor(rnd() * 256) : rnd() * 255;
  return a;
}

describe('boxSum', () => {
  it('equals direct summation over the replicate-padded window (exact on integer images)', () => {
    for (const [w, h, r] of [
      [17, 11, 0],
      [17, 11, 1],
      [17, 11, 3],
      [5, 4, 4], // window wider than the image
      [1, 1, 2],
    ] as const) {
      const src = randomImage(w, h, w * 100 + r, true);
      const dst = new Float64Array(w * h);
      boxSum(src, dst, w, h, r, new Float64Array(w * h));
      // Reference: the sum written out as a window loop (definition of a box sum).
      expect(Array.from(dst)).toEqual(Array.from(boxSumNaive(src, w, h, r)));
    }
  });

  it('works in place (dst === src)', () => {
    const src = randomImage(13, 9, 3, true);
    const ref = boxSumNaive(src, 13, 9, 2);
    boxSum(src, src, 13, 9, 2, new Float64Array(13 * 9));
    expect(Array.from(src)).toEqual(Array.from(ref));
  });

  it("matches scipy.ndimage.uniform_filter(mode='nearest') times the window size", () => {
    const w = 31;
    const h = 23;
    const r = 3;
    const src = randomImage(w, h, 42, false);
    const dst = new Float64Array(w * h);
    boxSum(src, dst, w, h, r, new Float64Array(w * h));
    // Outside reference: scipy's uniform filter with 'nearest' (replicate) borders is the box mean.
    const script = [
      'import sys, json, numpy as np',
      'from scipy.ndimage import uniform_filter',
      'd = json.load(sys.stdin)',
      "a = np.array(d['a'], dtype=np.float64).reshape(d['h'], d['w'])",
      "s = 2 * d['r'] + 1",
      "m = uniform_filter(a, size=s, mode='nearest') * (s * s)",
      'print(json.dumps(m.ravel().tolist()))',
    ].join('\n');
    const res = spawnSync('/usr/bin/python3', ['-c', script], {
      input: JSON.stringify({ a: Array.from(src), w, h, r }),
      encoding: 'utf8',
    });
    expect(res.status, res.stderr).toBe(0);
    const ref = JSON.parse(res.stdout) as number[];
    for (let i = 0; i < ref.length; i++) expect(Math.abs(dst[i] - ref[i])).toBeLessThan(1e-9);
  });
});
