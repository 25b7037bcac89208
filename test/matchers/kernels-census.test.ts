import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { censusCostVolume, censusTransform, censusWords, hammingSlice, popcount32 } from '../../matchers/kernels/census.js';
import { EXCLUDED_U16 } from '../../matchers/kernels/wta.js';
import { mulberry32 } from './block-rds.js';
import { randomImage } from '../support/rng.js';

/** Bit count by shifting one bit at a time (definition of population count). */
function naivePopcount(x: number): number {
  let c = 0;
  for (let i = 0; i < 32; i++) if ((x >>> i) & 1) c++;
  return c;
}

describe('popcount32', () => {
  it('counts the bits of known words', () => {
    // Worked by hand: all 32 bits set; the top and bottom bits; none; alternate bits; two nibbles.
    expect(popcount32(0xffffffff)).toBe(32);
    expect(popcount32(0x80000001)).toBe(2);
    expect(popcount32(0)).toBe(0);
    expect(popcount32(0x55555555)).toBe(16);
    expect(popcount32(0x0000f0f0)).toBe(8);
    expect(popcount32(1)).toBe(1);
  });
  it('agrees with a bit-by-bit count on any uint32 (definition)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 0xffffffff }), (x) => popcount32(x) === naivePopcount(x)),
      { numRuns: 2000 },
    );
  });
});

describe('censusTransform', () => {
  it('gives the hand-worked bit string of a 3x3 patch', () => {
    // Patch (row-major):   10 20 30
    //                      40 25 15
    //                       5 25 60
    // Centre 25. Neighbours in row-major order, centre skipped: 10 20 30 40 15 5 25 60.
    // Rule (Zabih & Woodfill 1994, our orientation): bit = 1 when neighbour < centre:
    //   1  1  0  0  1  1  0  0   (25 < 25 is false: equal gives 0)
    // bit k is bit k of the word, LSB first: 1 + 2 + 16 + 32 = 51.
    const img = Float32Array.from([10, 20, 30, 40, 25, 15, 5, 25, 60]);
    const { words, bits } = censusTransform(img, 3, 3, 3, 3);
    expect(words).toBe(1);
    expect(bits[4]).toBe(51);
  });

  it('replicates the border (hand-worked corner pixel)', () => {
    // Same patch, pixel (2,2) = 60. Neighbours with coordinates clamped into the image:
    // (1,1)=25 (2,1)=15 (2,1)=15 | (1,2)=25 (2,2)=60 | (1,2)=25 (2,2)=60 (2,2)=60
    // bits (neighbour < 60): 1 1 1 1 0 1 0 0  -> 1+2+4+8+32 = 47.
    const img = Float32Array.from([10, 20, 30, 40, 25, 15, 5, 25, 60]);
    const { bits } = censusTransform(img, 3, 3, 3, 3);
    expect(bits[8]).toBe(47);
    // Pixel (0,0) = 10: every clamped neighbour is >= 10, so the string is all zeros (by hand).
    expect(bits[0]).toBe(0);
  });

  it('splits a 9x7 window over two words, LSB first', () => {
    // 9x7 window: 62 neighbours -> 2 words; a centre brighter than all of them sets
    // all 62 bits: word 0 = 0xFFFFFFFF, word 1 = the low 30 bits = 0x3FFFFFFF (by hand).
    const w = 9;
    const h = 7;
    const img = new Float32Array(w * h);
    img[3 * w + 4] = 100;
    const { words, bits } = censusTransform(img, w, h, 9, 7);
    expect(words).toBe(2);
    expect(censusWords(9, 7)).toBe(2);
    const p = 3 * w + 4;
    expect(bits[p * 2]).toBe(0xffffffff);
    expect(bits[p * 2 + 1]).toBe(0x3fffffff);
    // A dark pixel next to it sees the bright centre as not darker: bit stays 0, and all others
    // are equal (0 < 0 false), so its string is all zero (by hand).
    expect(bits[(3 * w + 3) * 2]).toBe(0);
    expect(bits[(3 * w + 3) * 2 + 1]).toBe(0);
  });

  it('is unchanged by any strictly increasing intensity change (property of the definition)', () => {
    const rnd = mulberry32(11);
    const w = 23;
    const h = 17;
    const img = new Float32Array(w * h);
    for (let i = 0; i < img.length; i++) img[i] = Math.floor(rnd() * 256);
    const maps: ((v: number) => number)[] = [
      (v) => 3 * v + 7,
      (v) => Math.sqrt(v) * 10 + 1,
      (v) => (v * v) / 255,
      (v) => Math.log1p(v),
    ];
    const ref = censusTransform(img, w, h, 7, 5);
    for (const f of maps) {
      const img2 = img.map(f);
      const got = censusTransform(img2, w, h, 7, 5);
      expect(got.words).toBe(ref.words);
      expect(Buffer.from(got.bits.buffer).equals(Buffer.from(ref.bits.buffer))).toBe(true);
    }
  });

  it('rejects even window sides', () => {
    expect(() => censusTransform(new Float32Array(4), 2, 2, 4, 3)).toThrow(RangeError);
  });
});

describe('Hamming costs', () => {
  const rnd = mulberry32(5);
  const w = 19;
  const h = 9;
  const L = randomImage(rnd, w * h);
  const R = randomImage(rnd, w * h);
  const cl = censusTransform(L, w, h, 9, 7);
  const cr = censusTransform(R, w, h, 9, 7);

  it('hammingSlice equals a bit-by-bit Hamming distance (definition), right x clamped', () => {
    const out = new Float64Array(w * h);
    for (const d of [-4, 0, 3, 20]) {
      hammingSlice(cl.bits, cr.bits, cl.words, w, h, d, out);
      for (let y = 0; y < h; y++) {
        for (let x = 0; x < w; x++) {
          const xr = Math.min(w - 1, Math.max(0, x - d));
          let hd = 0;
          for (let k = 0; k < cl.words; k++) {
            hd += naivePopcount((cl.bits[(y * w + x) * cl.words + k] ^ cr.bits[(y * w + xr) * cl.words + k]) >>> 0);
          }
          expect(out[y * w + x]).toBe(hd);
        }
      }
    }
  });

  it('censusCostVolume holds the same costs and marks matches outside the right image', () => {
    const minD = -3;
    const levels = 8;
    const vol = censusCostVolume(cl.bits, cr.bits, cl.words, w, h, minD, levels);
    const slice = new Float64Array(w * h);
    for (let l = 0; l < levels; l++) {
      const d = minD + l;
      hammingSlice(cl.bits, cr.bits, cl.words, w, h, d, slice);
      for (let p = 0; p < w * h; p++) {
        const x = p % w;
        const inside = x - d >= 0 && x - d < w; // d = x_left - x_right (README, "Datasets" conventions)
        expect(vol[p * levels + l]).toBe(inside ? slice[p] : EXCLUDED_U16);
      }
    }
  });
});
