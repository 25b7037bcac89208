import { describe, expect, it } from 'vitest';
import { EXCLUDED_U16, wta, wtaRight } from '../../matchers/kernels/wta.js';
import { createSliceWta, sliceWtaAdd, sliceWtaFinish } from '../../matchers/kernels/slice-wta.js';
import { mulberry32 } from './block-rds.js';

describe('wta subpixel parabola', () => {
  // Costs sampled from c(d) = a (d - v)^2 + b with the vertex v = d0 + 0.3 (and - 0.3).
  // Vertex of the parabola through three equally spaced points: offset =
  // (c[-1] - c[+1]) / (2 (c[-1] - 2 c[0] + c[+1])) (standard algebra), so the fit must
  // return v exactly for a true parabola.
  for (const off of [0.3, -0.3, 0, 0.49]) {
    it(`recovers a parabola vertex at d0 ${off >= 0 ? '+' : '-'} ${Math.abs(off)}`, () => {
      const minD = -2;
      const levels = 12;
      const d0 = 4;
      const v = d0 + off;
      const vol = new Float32Array(levels);
      for (let l = 0; l < levels; l++) vol[l] = 3 * (minD + l - v) ** 2 + 5;
      const d = wta(vol, 1, 1, levels, minD, { subpix: true });
      // Tolerance: the costs are stored as float32 (relative error ~6e-8 on values ~5..600).
      expect(d[0]).toBeCloseTo(v, 5);
      const dInt = wta(vol, 1, 1, levels, minD, { subpix: false });
      expect(dInt[0]).toBe(Math.round(v)); // plain argmin (definition of WTA)
    });
  }

  it('skips the fit at the ends of the range (no neighbour on one side)', () => {
    // Minimum at the last level: the parabola would need c[d+1], which does not exist.
    const vol = Float32Array.from([9, 4, 1, 0.5]);
    expect(wta(vol, 1, 1, 4, 10, { subpix: true })[0]).toBe(13);
  });

  it('uint16 volumes: same answer, excluded candidates skipped', () => {
    const vol = Uint16Array.from([EXCLUDED_U16, 30, 10, 20, EXCLUDED_U16]);
    // argmin at level 2 -> d = 0 + 2; offset = (30 - 20) / (2 (30 - 20 + 20)) = 1/6 (by hand).
    expect(wta(vol, 1, 1, 5, 0, { subpix: true })[0]).toBeCloseTo(2 + 1 / 6, 6);
    const all = Uint16Array.from([EXCLUDED_U16, EXCLUDED_U16]);
    expect(wta(all, 1, 1, 2, 0, { subpix: true })[0]).toBeNaN();
  });
});

describe('uniqueness', () => {
  it('rejects a pixel whose non-adjacent runner-up is within the margin (hand-built)', () => {
    // Costs: best 1.0 at level 1; level 2 (adjacent) 1.01 is ignored; level 4 costs 1.05.
    const vol = Float32Array.from([5, 1, 1.01, 3, 1.05, 9]);
    // margin 10%: 1.05 <= 1.1 -> no answer; margin 4%: 1.05 > 1.04 -> answer level 1.
    expect(wta(vol, 1, 1, 6, 0, { subpix: false, uniqueness: 10 })[0]).toBeNaN();
    expect(wta(vol, 1, 1, 6, 0, { subpix: false, uniqueness: 4 })[0]).toBe(1);
    expect(wta(vol, 1, 1, 6, 0, { subpix: false })[0]).toBe(1);
  });
});

describe('wtaRight', () => {
  it('takes argmin_d C(xr + d, d) from the left volume (hand-built row)', () => {
    // width 4, one row, levels 2, minDisparity 0. C[x][d]:
    //   x=0: d0=5 d1=X   x=1: d0=7 d1=2   x=2: d0=1 d1=6   x=3: d0=8 d1=3
    // (X: x - d < 0, excluded.) Right pixel xr chooses between C(xr, 0) and C(xr + 1, 1):
    //   xr=0: 5 vs 2 -> d=1; xr=1: 7 vs 6 -> 1; xr=2: 1 vs 3 -> 0; xr=3: 8 vs (x=4 outside) -> 0
    const X = Infinity;
    const vol = Float32Array.from([5, X, 7, 2, 1, 6, 8, 3]);
    expect(Array.from(wtaRight(vol, 4, 1, 2, 0))).toEqual([1, 1, 0, 0]);
  });
});

/** Naive WTA written for the test: argmin over candidates with 0 <= x - d < width. */
function naiveLeft(cost: (x: number, y: number, l: number) => number, w: number, h: number, levels: number, minD: number, subpix: boolean, uniq: number): Float32Array {
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const ok = (l: number) => l >= 0 && l < levels && x - (minD + l) >= 0 && x - (minD + l) < w;
      let bl = -1;
      for (let l = 0; l < levels; l++) if (ok(l) && (bl < 0 || cost(x, y, l) < cost(x, y, bl))) bl = l;
      if (bl < 0) {
        out[y * w + x] = NaN;
        continue;
      }
      const b = cost(x, y, bl);
      let unique = true;
      if (uniq > 0) {
        for (let l = 0; l < levels; l++) {
          if (ok(l) && Math.abs(l - bl) > 1 && cost(x, y, l) <= b * (1 + uniq / 100)) unique = false;
        }
      }
      if (!unique) {
        out[y * w + x] = NaN;
        continue;
      }
      let d = minD + bl;
      if (subpix && bl > 0 && bl < levels - 1 && ok(bl - 1) && ok(bl + 1)) {
        const cm = cost(x, y, bl - 1);
        const cp = cost(x, y, bl + 1);
        const den = cm - 2 * b + cp;
        if (den > 0) d += Math.max(-0.5, Math.min(0.5, (cm - cp) / (2 * den)));
      }
      out[y * w + x] = d;
    }
  }
  return out;
}

function naiveRight(cost: (x: number, y: number, l: number) => number, w: number, h: number, levels: number, minD: number): Float32Array {
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++) {
    for (let xr = 0; xr < w; xr++) {
      let bl = -1;
      for (let l = 0; l < levels; l++) {
        const x = xr + minD + l;
        if (x < 0 || x >= w) continue;
        if (bl < 0 || cost(x, y, l) < cost(xr + minD + bl, y, bl)) bl = l;
      }
      out[y * w + xr] = bl < 0 ? NaN : minD + bl;
    }
  }
  return out;
}

describe('volume and streaming WTA against a naive argmin', () => {
  const cases = [
    { w: 13, h: 5, minD: -3, levels: 9, seed: 1 },
    { w: 10, h: 4, minD: 2, levels: 12, seed: 2 },
    { w: 6, h: 3, minD: -9, levels: 4, seed: 3 }, // some pixels have no candidate at all
  ];
  for (const { w, h, minD, levels, seed } of cases) {
    for (const uniq of [0, 15]) {
      it(`w=${w} minD=${minD} levels=${levels} uniq=${uniq}`, () => {
        const rnd = mulberry32(seed);
        const n = w * h;
        // Small integer costs so that ties occur (ties go to the lowest level in all three).
        const raw = new Float64Array(n * levels);
        for (let i = 0; i < raw.length; i++) raw[i] = Math.floor(rnd() * 20);
        const cost = (x: number, y: number, l: number) => raw[(y * w + x) * levels + l];
        const vol = new Float32Array(n * levels);
        const vol16 = new Uint16Array(n * levels);
        for (let p = 0; p < n; p++) {
          for (let l = 0; l < levels; l++) {
            const xr = (p % w) - (minD + l);
            const inside = xr >= 0 && xr < w;
            vol[p * levels + l] = inside ? raw[p * levels + l] : Infinity;
            vol16[p * levels + l] = inside ? raw[p * levels + l] : EXCLUDED_U16;
          }
        }
        const refL = naiveLeft(cost, w, h, levels, minD, true, uniq);
        const refR = naiveRight(cost, w, h, levels, minD);
        expect(Array.from(wta(vol, w, h, levels, minD, { subpix: true, uniqueness: uniq }))).toEqual(Array.from(refL));
        expect(Array.from(wta(vol16, w, h, levels, minD, { subpix: true, uniqueness: uniq }))).toEqual(Array.from(refL));
        expect(Array.from(wtaRight(vol, w, h, levels, minD))).toEqual(Array.from(refR));
        expect(Array.from(wtaRight(vol16, w, h, levels, minD))).toEqual(Array.from(refR));
        // Streaming: slices carry garbage (-1000) at excluded pixels, which must be ignored.
        const s = createSliceWta(w, h, levels, minD, { subpix: true, uniqueness: uniq, right: true });
        const bufs = [new Float64Array(n), new Float64Array(n)];
        for (let l = 0; l < levels; l++) {
          const slice = bufs[l & 1]; // the state keeps the previous slice by reference
          for (let p = 0; p < n; p++) {
            const xr = (p % w) - (minD + l);
            slice[p] = xr >= 0 && xr < w ? raw[p * levels + l] : -1000;
          }
          sliceWtaAdd(s, slice);
        }
        const got = sliceWtaFinish(s);
        expect(Array.from(got.left)).toEqual(Array.from(refL));
        expect(Array.from(got.right!)).toEqual(Array.from(refR));
      });
    }
  }

  it('refuses more slices than levels', () => {
    const s = createSliceWta(2, 1, 1, 0, { subpix: false });
    sliceWtaAdd(s, new Float64Array(2));
    expect(() => sliceWtaAdd(s, new Float64Array(2))).toThrow(RangeError);
  });
});
