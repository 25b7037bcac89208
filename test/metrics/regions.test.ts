import { describe, expect, it } from 'vitest';
import { buildRegions, jumpMask, textureEnergy } from '../../src/dataset/regions.js';
import { deriveOcclusion } from '../../src/dataset/occlusion.js';
import { DEFAULT_REGION_PARAMS, REGION_BIT, type RegionParams } from '../../src/core/regions.js';
import { UsageError } from '../../src/core/errors.js';
import { rng, runNumpy } from './helpers.js';

const K = REGION_BIT.known;
const V = REGION_BIT.visible;
const O = REGION_BIT.occluded;
const F = REGION_BIT.flat;
const J = REGION_BIT.jump;

function params(over: Partial<RegionParams> = {}): RegionParams {
  return { ...DEFAULT_REGION_PARAMS, ...over };
}

describe('buildRegions', () => {
  it('constant patch is flat, a strong texture is not (definition: mean squared gradient < threshold)', () => {
    // 40x20 image: left half constant 100, right half stripes 0,0,255,255 (period 4).
    // Left half, away from the seam: gradient 0 -> energy 0 < 4 -> flat.
    // Right half: every pixel has neighbours 0 and 255, |g| = 255/2 = 127.5, energy 16256.25
    // -> not flat. (Alternating 0/255 would have g = 0: central differences skip the pixel.)
    const w = 40, h = 20;
    const gray = new Float32Array(w * h);
    for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) gray[y * w + x] = x < 20 ? 100 : (x % 4 < 2 ? 0 : 255);
    const truth = new Float32Array(w * h).fill(3); // constant truth: no jumps
    const occ = new Uint8Array(w * h); // nothing occluded
    const r = buildRegions({ truth: truth, leftGray: gray, width: w, height: h, occlusion: occ }, params({ flatWindow: 5, flatThreshold: 4 }));
    for (let y = 0; y < h; y++) {
      // x <= 15: the 5-wide window (x-2..x+2) and the gradient (x-1..x+1) stay in the constant part
      for (let x = 0; x <= 15; x++) expect(r.bits[y * w + x]).toBe(K | V | F);
      for (let x = 24; x < w; x++) expect(r.bits[y * w + x]).toBe(K | V);
    }
  });

  it('a truth step produces a jump band of the configured radius (Chebyshev), only where visible', () => {
    // Truth: 5 for x < 10, 20 for x >= 10 (difference 15 > jumpGap 2) -> jump pixels x = 9 and 10
    // on every row. Radius 2 -> band x = 7..12. Column 13 is outside (distance 3).
    const w = 24, h = 8;
    const truth = new Float32Array(w * h);
    for (let i = 0; i < w * h; i++) truth[i] = i % w < 10 ? 5 : 20;
    const gray = new Float32Array(w * h);
    for (let i = 0; i < w * h; i++) gray[i] = (i * 37) % 251; // textured: not flat
    const occ = new Uint8Array(w * h);
    occ[3 * w + 11] = 1; // one occluded pixel inside the band: occluded, not jump
    const r = buildRegions({ truth: truth, leftGray: gray, width: w, height: h, occlusion: occ }, params({ jumpGap: 2, jumpRadius: 2, flatThreshold: 0 }));
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const b = r.bits[y * w + x];
        if (y === 3 && x === 11) {
          expect(b).toBe(K | O);
          continue;
        }
        expect(b).toBe(x >= 7 && x <= 12 ? K | V | J : K | V);
      }
    }
  });

  it('vertical jumps count too, and the band is a square (corners included)', () => {
    // 9x9, truth 0 except one pixel (4,4) = 10: jump pixels are (4,4) and its 4 neighbours
    // (a plus shape). Chebyshev radius 1 around (4,3),(3,4),(5,4),(4,5),(4,4) covers
    // rows 2..6 x cols 3..5 and rows 3..5 x cols 2..6: the 5x5 square x,y in 2..6 minus
    // its 4 corners (2,2),(2,6),(6,2),(6,6), which are at distance 2 from every jump pixel.
    const w = 9, h = 9;
    const truth = new Float32Array(w * h);
    truth[4 * w + 4] = 10;
    const m = jumpMask(truth, w, h, 2, 1);
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const inSquare = x >= 2 && x <= 6 && y >= 2 && y <= 6;
        const corner = (x === 2 || x === 6) && (y === 2 || y === 6);
        expect(m[y * w + x], `${x},${y}`).toBe(inSquare && !corner ? 1 : 0);
      }
    }
  });

  it('infinite and NaN truth are not known; no jump against unknown neighbours', () => {
    const w = 6, h = 1;
    const truth = Float32Array.of(1, Infinity, 1, NaN, -Infinity, 1);
    const r = buildRegions({ truth, leftGray: new Float32Array(w), occlusion: new Uint8Array(w), width: w, height: h }, params({ jumpRadius: 0 }));
    // known pixels x = 0, 2, 5; gray constant -> flat; neighbours unknown -> no jump
    expect(Array.from(r.bits)).toEqual([K | V | F, 0, K | V | F, 0, 0, K | V | F]);
  });

  it('visible excludes occluded: derived occlusion when no mask is given, mask wins when given', () => {
    // Same row as the occlusion worked example: d = 2 at x 0..5, 5 at x 6..9 (width 10).
    // deriveOcclusion marks x=0,1 outside, x=3,4,5 occluded.
    const truth = Float32Array.of(2, 2, 2, 2, 2, 2, 5, 5, 5, 5);
    const gray = new Float32Array(10);
    const p = params({ jumpRadius: 0, jumpGap: 100, flatThreshold: 0 });
    const r = buildRegions({ truth: truth, leftGray: gray, width: 10, height: 1 }, p);
    expect(Array.from(r.bits)).toEqual([K | O, K | O, K | V, K | O, K | O, K | O, K | V, K | V, K | V, K | V]);
    const mask = new Uint8Array(10);
    mask[7] = 255; // any non-zero byte = occluded
    const r2 = buildRegions({ truth: truth, leftGray: gray, width: 10, height: 1, occlusion: mask }, p);
    expect(Array.from(r2.bits)).toEqual([K | V, K | V, K | V, K | V, K | V, K | V, K | V, K | O, K | V, K | V]);
    // flat and jump only on visible pixels: with a huge threshold every visible pixel is flat
    const r3 = buildRegions({ truth: truth, leftGray: gray, width: 10, height: 1 }, { ...p, flatThreshold: 1e9, jumpGap: 1, jumpRadius: 9 });
    for (let x = 0; x < 10; x++) {
      const b = r3.bits[x];
      if (b & O) expect(b & (F | J | V)).toBe(0);
      else expect(b).toBe(K | V | F | J);
    }
  });

  it('rejects bad parameters with a UsageError naming the field (common practice)', () => {
    const t = new Float32Array(4);
    expect(() => buildRegions({ truth: t, leftGray: t, width: 2, height: 2 }, params({ flatWindow: 4 }))).toThrow(UsageError);
    expect(() => buildRegions({ truth: t, leftGray: t, width: 2, height: 2 }, params({ flatWindow: 4 }))).toThrow(/regions\.flatWindow/);
    expect(() => buildRegions({ truth: t, leftGray: t, width: 2, height: 2 }, params({ jumpRadius: -1 }))).toThrow(/regions\.jumpRadius/);
    expect(() => buildRegions({ truth: t, leftGray: t, width: 2, height: 3 }, params())).toThrow(RangeError);
  });

  it('texture energy, jump mask and region bits agree with numpy/scipy on random data', () => {
    const w = 97, h = 61; // odd sizes catch edge handling
    const r = rng(99);
    const gray = new Float32Array(w * h);
    const truth = new Float32Array(w * h);
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const i = y * w + x;
        // patches of constant gray and noisy gray; blocky truth with slants
        gray[i] = ((x >> 4) + (y >> 4)) % 2 ? 80 + (r() < 0.5 ? 0 : 1) : r() * 255;
        truth[i] = 4 + ((x >> 3) % 3) * 6 + 0.1 * y + (r() < 0.1 ? r() * 3 : 0);
        if (r() < 0.03) truth[i] = r() < 0.7 ? NaN : Infinity;
      }
    }
    const p = params({ flatWindow: 7, flatThreshold: 4, jumpGap: 2, jumpRadius: 3 });
    const energy = textureEnergy(gray, w, h, p.flatWindow);
    const jm = jumpMask(truth, w, h, p.jumpGap, p.jumpRadius);
    const occ = deriveOcclusion(truth, w, h, p.occlusionTol, p.occlusionTau);
    const bits = buildRegions({ truth: truth, leftGray: gray, width: w, height: h }, p).bits;
    const ref = runNumpy({ gray, truth, occ }, `
from scipy import ndimage
w, h, win, thr, gap, rad = ${w}, ${h}, ${p.flatWindow}, ${p.flatThreshold}, ${p.jumpGap}, ${p.jumpRadius}
I = load('gray', '<f4').astype(np.float64).reshape(h, w)
T = load('truth', '<f4').astype(np.float64).reshape(h, w)
occ = load('occ', 'u1').reshape(h, w)
P = np.pad(I, ((0, 0), (1, 1)), mode='edge')
g2 = ((P[:, 2:] - P[:, :-2]) / 2) ** 2
E = ndimage.uniform_filter(g2, size=win, mode='nearest')
known = np.isfinite(T)
src = np.zeros((h, w), bool)
with np.errstate(invalid='ignore'):
    dx = known[:, 1:] & known[:, :-1] & (np.abs(T[:, 1:] - T[:, :-1]) > gap)
    dy = known[1:, :] & known[:-1, :] & (np.abs(T[1:, :] - T[:-1, :]) > gap)
src[:, 1:] |= dx; src[:, :-1] |= dx; src[1:, :] |= dy; src[:-1, :] |= dy
J = ndimage.binary_dilation(src, structure=np.ones((2 * rad + 1, 2 * rad + 1), bool))
vis = known & (occ == 0)
bits = known * 1 + vis * 2 + (known & (occ != 0)) * 4 + (vis & (E < thr)) * 8 + (vis & J) * 16
print(json.dumps({'E': E.ravel().tolist(), 'J': J.ravel().astype(int).tolist(), 'bits': bits.ravel().astype(int).tolist()}))
`);
    let maxRel = 0;
    let borderline = 0;
    for (let i = 0; i < w * h; i++) {
      const a = energy[i], b = ref.E[i];
      maxRel = Math.max(maxRel, Math.abs(a - b) / Math.max(1, Math.abs(b)));
      if (Math.abs(b - p.flatThreshold) < 1e-9) borderline++;
    }
    // running sums vs scipy's filter: float64 rounding only
    expect(maxRel).toBeLessThan(1e-9);
    expect(borderline).toBe(0); // no pixel sits on the threshold, so the masks must agree exactly
    expect(Array.from(jm)).toEqual(ref.J);
    expect(Array.from(bits)).toEqual(ref.bits);
    // the data really exercise every region
    for (const bit of [K, V, O, F, J]) expect(bits.some((b) => (b & bit) !== 0)).toBe(true);
  });
});
