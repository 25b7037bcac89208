/**
 * Census transform (Zabih & Woodfill 1994) and Hamming costs over uint32 words.
 *
 * Public API (stable; other matchers build on it):
 *
 *   censusTransform(img, width, height, winW, winH): { words, bits }
 *     img      luminance, Float32Array, row-major (index = y * width + x)
 *     winW/H   window sides, odd, >= 1 (the window is centred on the pixel)
 *     words    uint32 words per pixel = ceil((winW * winH - 1) / 32)
 *     bits     Uint32Array of length width * height * words, pixel-major:
 *              the string of pixel p is bits[p * words + 0 .. p * words + words - 1]
 *
 *   Bit order: the neighbours of the window are visited in row-major order
 *   (dy = -rh..rh, then dx = -rw..rw), skipping the centre itself; the k-th
 *   neighbour visited is bit (k % 32) of word floor(k / 32), bit 0 being the least
 *   significant. Unused high bits of the last word are 0.
 *
 *   Comparison rule: bit = 1 when neighbour < centre (strictly), else 0.
 *   So equal values give 0, and any strictly increasing change of intensity
 *   leaves every bit unchanged.
 *
 *   Borders: replicate. A neighbour outside the image takes the value of the
 *   nearest pixel inside (coordinates clamped), so border pixels get full strings.
 *
 *   popcount32(x): number of set bits of the low 32 bits of x (SWAR bit tricks, no BigInt).
 *
 *   hammingSlice(bitsL, bitsR, words, width, height, d, out)
 *     Per-pixel Hamming distance for one disparity d between the left string at
 *     (x, y) and the right string at (x - d, y), written to out[y * width + x]
 *     (Float64Array). Where x - d falls outside the right image the right x is
 *     clamped to the image (replicate); such pixels are not candidates and the WTA
 *     stage excludes them (see wta.ts), the value only keeps box sums finite.
 *
 *   censusCostVolume(bitsL, bitsR, words, width, height, minDisparity, levels)
 *     Compact Uint16Array volume, layout [pixel][level] (index p * levels + (d - minDisparity)),
 *     cost = Hamming distance; a candidate whose match x - d is outside the right
 *     image holds EXCLUDED_U16 (65535, see wta.ts).
 */

import { EXCLUDED_U16 } from './wta.js';

export interface CensusBits {
  /** uint32 words per pixel. */
  readonly words: number;
  /** Pixel-major strings: bits[p * words + k]. */
  readonly bits: Uint32Array;
}

/** Number of set bits in the low 32 bits of x (SWAR, "bit twiddling" popcount). */
export function popcount32(x: number): number {
  x = x - ((x >>> 1) & 0x55555555);
  x = (x & 0x33333333) + ((x >>> 2) & 0x33333333);
  x = (x + (x >>> 4)) & 0x0f0f0f0f;
  return Math.imul(x, 0x01010101) >>> 24;
}

/** uint32 words needed for a winW x winH census window. */
export function censusWords(winW: number, winH: number): number {
  return Math.max(1, Math.ceil((winW * winH - 1) / 32));
}

/** Census transform; see the header of this file for bit order, comparison rule and borders. */
export function censusTransform(
  img: Float32Array,
  width: number,
  height: number,
  winW: number,
  winH: number,
): CensusBits {
  if (!(winW >= 1 && winH >= 1 && winW % 2 === 1 && winH % 2 === 1)) {
    throw new RangeError(`census window must have odd sides >= 1, got ${winW}x${winH}`);
  }
  const words = censusWords(winW, winH);
  const n = width * height;
  const bits = new Uint32Array(n * words);
  const rw = (winW - 1) >> 1;
  const rh = (winH - 1) >> 1;
  // Offsets of the neighbours, row-major, centre skipped.
  const nb = winW * winH - 1;
  const offX = new Int32Array(nb);
  const offY = new Int32Array(nb);
  let k = 0;
  for (let dy = -rh; dy <= rh; dy++) {
    for (let dx = -rw; dx <= rw; dx++) {
      if (dx === 0 && dy === 0) continue;
      offX[k] = dx;
      offY[k] = dy;
      k++;
    }
  }
  const xmax = width - 1;
  const ymax = height - 1;
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const c = img[row + x];
      const base = (row + x) * words;
      const interior = x >= rw && x + rw <= xmax && y >= rh && y + rh <= ymax;
      let word = 0;
      let bit = 0;
      let w = 0;
      for (let i = 0; i < nb; i++) {
        let v: number;
        if (interior) {
          v = img[row + offY[i] * width + x + offX[i]];
        } else {
          let xx = x + offX[i];
          let yy = y + offY[i];
          xx = xx < 0 ? 0 : xx > xmax ? xmax : xx;
          yy = yy < 0 ? 0 : yy > ymax ? ymax : yy;
          v = img[yy * width + xx];
        }
        if (v < c) word |= 1 << bit;
        bit++;
        if (bit === 32) {
          bits[base + w] = word;
          w++;
          word = 0;
          bit = 0;
        }
      }
      if (bit > 0) bits[base + w] = word;
    }
  }
  return { words, bits };
}

/**
 * Hamming distance between the left string at (x, y) and the right string at
 * (clamp(x - d), y), for every pixel, into `out` (length width * height).
 */
export function hammingSlice(
  bitsL: Uint32Array,
  bitsR: Uint32Array,
  words: number,
  width: number,
  height: number,
  d: number,
  out: Float64Array,
): void {
  if (words === 1) hammingSlice1(bitsL, bitsR, width, height, d, out);
  else if (words === 2) hammingSlice2(bitsL, bitsR, width, height, d, out);
  else hammingSliceN(bitsL, bitsR, words, width, height, d, out);
}

/** Columns [0, lo) clamp to right x 0, [lo, hi) are inside, [hi, width) clamp to width - 1. */
function inside(width: number, d: number): number {
  return d <= 0 ? 0 : d >= width ? width : d;
}
function insideEnd(width: number, d: number, lo: number): number {
  const hi = width + d;
  return hi < lo ? lo : hi > width ? width : hi;
}

// One word per pixel (windows up to 33 pixels, e.g. 5x5): no inner loop.
// hammingSlice1, hammingSlice2 and hammingSliceN repeat one loop on purpose: the 1- and
// 2-word forms have no inner loop over words, which is the common census window (up to 9x7).
function hammingSlice1(
  bitsL: Uint32Array,
  bitsR: Uint32Array,
  width: number,
  height: number,
  d: number,
  out: Float64Array,
): void {
  const lo = inside(width, d);
  const hi = insideEnd(width, d, lo);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const r0 = bitsR[row];
    const r1 = bitsR[row + width - 1];
    for (let x = 0; x < width; x++) {
      const rv = x < lo ? r0 : x >= hi ? r1 : bitsR[row + x - d];
      let v = bitsL[row + x] ^ rv;
      v = v - ((v >>> 1) & 0x55555555);
      v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = (v + (v >>> 4)) & 0x0f0f0f0f;
      out[row + x] = Math.imul(v, 0x01010101) >>> 24;
    }
  }
}

// Two words per pixel (windows up to 65 pixels, e.g. 7x7 and 9x7).
function hammingSlice2(
  bitsL: Uint32Array,
  bitsR: Uint32Array,
  width: number,
  height: number,
  d: number,
  out: Float64Array,
): void {
  const lo = inside(width, d);
  const hi = insideEnd(width, d, lo);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const xr = x < lo ? 0 : x >= hi ? width - 1 : x - d;
      const pl = (row + x) << 1;
      const pr = (row + xr) << 1;
      let v = bitsL[pl] ^ bitsR[pr];
      v = v - ((v >>> 1) & 0x55555555);
      v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = (v + (v >>> 4)) & 0x0f0f0f0f;
      let u = bitsL[pl + 1] ^ bitsR[pr + 1];
      u = u - ((u >>> 1) & 0x55555555);
      u = (u & 0x33333333) + ((u >>> 2) & 0x33333333);
      u = (u + (u >>> 4)) & 0x0f0f0f0f;
      out[row + x] = (Math.imul(v, 0x01010101) >>> 24) + (Math.imul(u, 0x01010101) >>> 24);
    }
  }
}

function hammingSliceN(
  bitsL: Uint32Array,
  bitsR: Uint32Array,
  words: number,
  width: number,
  height: number,
  d: number,
  out: Float64Array,
): void {
  const lo = inside(width, d);
  const hi = insideEnd(width, d, lo);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const xr = x < lo ? 0 : x >= hi ? width - 1 : x - d;
      let pl = (row + x) * words;
      let pr = (row + xr) * words;
      let h = 0;
      for (let k = 0; k < words; k++, pl++, pr++) {
        let v = bitsL[pl] ^ bitsR[pr];
        v = v - ((v >>> 1) & 0x55555555);
        v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
        v = (v + (v >>> 4)) & 0x0f0f0f0f;
        h += Math.imul(v, 0x01010101) >>> 24;
      }
      out[row + x] = h;
    }
  }
}

/**
 * Compact census cost volume, Uint16Array [pixel][level], level = d - minDisparity.
 * Excluded candidates (x - d outside the right image) hold EXCLUDED_U16.
 * Memory: width * height * levels * 2 bytes; callers should check the size first.
 */
export function censusCostVolume(
  bitsL: Uint32Array,
  bitsR: Uint32Array,
  words: number,
  width: number,
  height: number,
  minDisparity: number,
  levels: number,
): Uint16Array {
  const vol = new Uint16Array(width * height * levels);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const p = row + x;
      const vbase = p * levels;
      const lbase = p * words;
      for (let l = 0; l < levels; l++) {
        const xr = x - (minDisparity + l);
        if (xr < 0 || xr >= width) {
          vol[vbase + l] = EXCLUDED_U16;
          continue;
        }
        let pl = lbase;
        let pr = (row + xr) * words;
        let h = 0;
        for (let k = 0; k < words; k++, pl++, pr++) {
          let v = bitsL[pl] ^ bitsR[pr];
          v = v - ((v >>> 1) & 0x55555555);
          v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
          v = (v + (v >>> 4)) & 0x0f0f0f0f;
          h += Math.imul(v, 0x01010101) >>> 24;
        }
        vol[vbase + l] = h;
      }
    }
  }
  return vol;
}
