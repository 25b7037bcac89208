/**
 * Box sums (not means) over a square window, separable running sums: O(1) per
 * pixel whatever the window size.
 *
 *   boxSum(src, dst, width, height, radius, tmp): void
 *     dst[y*width+x] = sum of src over the (2*radius+1)^2 window centred on (x, y).
 *     Borders: replicate (coordinates clamped into the image), so every window has
 *     (2*radius+1)^2 terms. Float64Array in and out (exact for integer inputs below
 *     2^53); tmp is a scratch Float64Array of width * height. dst may equal src.
 *
 *   boxSumNaive(...) the same by direct summation, a reference for tests only.
 */

/** Separable running box sum with replicated borders; see the file header. */
export function boxSum(
  src: Float64Array,
  dst: Float64Array,
  width: number,
  height: number,
  radius: number,
  tmp: Float64Array,
): void {
  const xmax = width - 1;
  const ymax = height - 1;
  const r = radius;
  // Horizontal pass: src -> tmp.
  for (let y = 0; y < height; y++) {
    const row = y * width;
    let s = 0;
    for (let i = -r; i <= r; i++) s += src[row + (i < 0 ? 0 : i > xmax ? xmax : i)];
    tmp[row] = s;
    // Step x: add index x + r, remove index x - r - 1, each clamped. The loop is split
    // so the long middle part needs no clamping (clamps in the hot loop cost ~3x).
    const first = src[row];
    let x = 1;
    for (; x < width && x - r - 1 < 0 && x + r <= xmax; x++) {
      s += src[row + x + r] - first;
      tmp[row + x] = s;
    }
    for (; x < width && x + r <= xmax; x++) {
      s += src[row + x + r] - src[row + x - r - 1];
      tmp[row + x] = s;
    }
    for (; x < width; x++) {
      const a = x + r;
      const b = x - r - 1;
      s += src[row + (a > xmax ? xmax : a)] - src[row + (b < 0 ? 0 : b)];
      tmp[row + x] = s;
    }
  }
  // Vertical pass: tmp -> dst, one running column sum per x, row by row (cache friendly).
  const col = new Float64Array(width);
  for (let i = -r; i <= r; i++) {
    const yy = i < 0 ? 0 : i > ymax ? ymax : i;
    const row = yy * width;
    for (let x = 0; x < width; x++) col[x] += tmp[row + x];
  }
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) dst[row + x] = col[x];
    if (y === ymax) break;
    const a = y + r + 1;
    const b = y - r;
    const addRow = (a > ymax ? ymax : a) * width;
    const subRow = (b < 0 ? 0 : b) * width;
    for (let x = 0; x < width; x++) col[x] += tmp[addRow + x] - tmp[subRow + x];
  }
}

/** Direct-summation reference of boxSum (tests only; O(radius^2) per pixel). */
export function boxSumNaive(src: Float64Array, width: number, height: number, radius: number): Float64Array {
  const out = new Float64Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let s = 0;
      for (let dy = -radius; dy <= radius; dy++) {
        const yy = Math.min(height - 1, Math.max(0, y + dy));
        for (let dx = -radius; dx <= radius; dx++) {
          const xx = Math.min(width - 1, Math.max(0, x + dx));
          s += src[yy * width + xx];
        }
      }
      out[y * width + x] = s;
    }
  }
  return out;
}
