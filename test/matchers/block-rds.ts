/**
 * Test helper (not a test file): a random-dot stereogram in the manner of Julesz (1960),
 * built here by construction so that truth and occlusion are known exactly.
 *
 * Scene: a far wall of random dots at integer disparity d1 and, in front of it, a
 * central square of other random dots at integer disparity d2 (> d1). Texture is
 * attached to the surfaces: left pixel (x, y) of the wall shows wall texel x, and
 * right pixel xr shows wall texel xr + d1 (so d = x - xr = d1); the square likewise
 * with d2. A wall pixel of the left image whose right position is covered by the
 * square is occluded; a pixel with x - d < 0 is outside the right frame.
 */

/** mulberry32, the shared seeded test generator (test/support/rng.ts). */
import { mulberry32 } from '../support/rng.js';
export { mulberry32 };

export interface Stereogram {
  width: number;
  height: number;
  left: Float32Array;
  right: Float32Array;
  truth: Float32Array;
  /** 1 = occluded in the right view or outside its frame. */
  occluded: Uint8Array;
  square: { x0: number; x1: number; y0: number; y1: number };
}

export function randomDotStereogram(width: number, height: number, d1: number, d2: number, seed: number): Stereogram {
  const rnd = mulberry32(seed);
  const margin = Math.abs(d1) + Math.abs(d2) + 2;
  const tw = width + 2 * margin;
  // Integer intensities 0..255 so SAD/SSD sums are exact.
  const wall = new Float32Array(tw * height);
  for (let i = 0; i < wall.length; i++) wall[i] = Math.floor(rnd() * 256);
  const sq = new Float32Array(tw * height);
  for (let i = 0; i < sq.length; i++) sq[i] = Math.floor(rnd() * 256);
  const x0 = Math.floor(width / 4);
  const x1 = width - x0;
  const y0 = Math.floor(height / 4);
  const y1 = height - y0;
  const n = width * height;
  const left = new Float32Array(n);
  const right = new Float32Array(n);
  const truth = new Float32Array(n);
  const occluded = new Uint8Array(n);
  for (let y = 0; y < height; y++) {
    const inRows = y >= y0 && y < y1;
    for (let x = 0; x < width; x++) {
      const p = y * width + x;
      const inSq = inRows && x >= x0 && x < x1;
      left[p] = inSq ? sq[y * tw + x + margin] : wall[y * tw + x + margin];
      truth[p] = inSq ? d2 : d1;
      // right image at xr = x
      const u = x + d2; // the square's texel seen at right x
      right[p] = inRows && u >= x0 && u < x1 ? sq[y * tw + u + margin] : wall[y * tw + x + d1 + margin];
      // occlusion of left pixel p
      const xr = x - truth[p];
      if (xr < 0 || xr > width - 1) occluded[p] = 1;
      else if (!inSq && inRows && xr + d2 >= x0 && xr + d2 < x1) occluded[p] = 1;
    }
  }
  return { width, height, left, right, truth, occluded, square: { x0, x1, y0, y1 } };
}

/**
 * Pixels to score: away from the image border by `border` px and more than `band` px
 * (Chebyshev) from any occluded pixel or truth disparity jump. A window of radius r
 * straddles a jump within r px, where window methods are known to fatten the front
 * surface (common practice: such pixels are scored in a separate region).
 */
export function scoringMask(s: Stereogram, border: number, band: number): Uint8Array {
  const { width, height, truth, occluded } = s;
  const bad = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const p = y * width + x;
      const jump =
        (x + 1 < width && truth[p + 1] !== truth[p]) || (y + 1 < height && truth[p + width] !== truth[p]);
      if (occluded[p] || jump) bad[p] = 1;
    }
  }
  const mask = new Uint8Array(width * height);
  for (let y = border; y < height - border; y++) {
    for (let x = border; x < width - border; x++) {
      let ok = 1;
      for (let dy = -band; dy <= band && ok; dy++) {
        const yy = y + dy;
        if (yy < 0 || yy >= height) continue;
        for (let dx = -band; dx <= band; dx++) {
          const xx = x + dx;
          if (xx >= 0 && xx < width && bad[yy * width + xx]) {
            ok = 0;
            break;
          }
        }
      }
      mask[y * width + x] = ok;
    }
  }
  return mask;
}

/** Share of masked pixels whose prediction is finite and within `tol` px of truth. */
export function shareCorrect(pred: Float32Array, s: Stereogram, mask: Uint8Array, tol: number): number {
  let n = 0;
  let good = 0;
  for (let p = 0; p < pred.length; p++) {
    if (!mask[p]) continue;
    n++;
    const v = pred[p];
    if (Number.isFinite(v) && Math.abs(v - s.truth[p]) <= tol) good++;
  }
  return n === 0 ? NaN : good / n;
}
