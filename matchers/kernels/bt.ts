/**
 * Birchfield–Tomasi sampling-insensitive pixel dissimilarity
 * (S. Birchfield and C. Tomasi, "A pixel dissimilarity measure that is insensitive
 * to image sampling", IEEE TPAMI 20(4), 1998).
 *
 * For a left pixel xL and a right pixel xR on the same row, with linear interpolation
 * between samples, the one-sided dissimilarity is
 *   dbar(xL, xR, IL, IR) = min over x in [xR - 1/2, xR + 1/2] of |IL(xL) - IR^(x)|
 * which equals max(0, IL(xL) - IRmax, IRmin - IL(xL)) where
 *   IR- = (IR(xR) + IR(xR - 1)) / 2,  IR+ = (IR(xR) + IR(xR + 1)) / 2,
 *   IRmin = min(IR-, IR+, IR(xR)),    IRmax = max(IR-, IR+, IR(xR)).
 * The measure is symmetric: d = min(dbar(xL, xR, IL, IR), dbar(xR, xL, IR, IL)).
 * At the row ends the missing neighbour is replaced by the pixel itself
 * (the half-interval on that side collapses to the sample).
 *
 * Intensities are the 0-255 luminance the matchers receive.
 */

/**
 * Per-pixel interpolation extremes of one row: out `lo[x]` = min(I-, I+, I), `hi[x]` = max(...).
 * `row` is read from `src` starting at `offset`, `width` samples.
 */
export function btExtremes(
  src: Float32Array,
  offset: number,
  width: number,
  lo: Float32Array,
  hi: Float32Array,
): void {
  for (let x = 0; x < width; x++) {
    const c = src[offset + x];
    const l = x > 0 ? 0.5 * (c + src[offset + x - 1]) : c;
    const r = x < width - 1 ? 0.5 * (c + src[offset + x + 1]) : c;
    let mn = c < l ? c : l;
    if (r < mn) mn = r;
    let mx = c > l ? c : l;
    if (r > mx) mx = r;
    lo[x] = mn;
    hi[x] = mx;
  }
}

/**
 * The symmetric BT dissimilarity of one left/right sample pair, given the samples
 * and their precomputed interpolation extremes.
 */
export function btPair(iL: number, loL: number, hiL: number, iR: number, loR: number, hiR: number): number {
  // dbar(xL, xR, IL, IR): left sample against the right interval
  let a = iL - hiR;
  const a2 = loR - iL;
  if (a2 > a) a = a2;
  if (a < 0) a = 0;
  // dbar(xR, xL, IR, IL): right sample against the left interval
  let b = iR - hiL;
  const b2 = loL - iR;
  if (b2 > b) b = b2;
  if (b < 0) b = 0;
  return a < b ? a : b;
}

/**
 * Straightforward reference of the BT cost of one row for every disparity in
 * [minD, maxD]: out[x * D + (d - minD)] = BT(xL = x, xR = x - d), or `outside`
 * when x - d falls outside the row.
 */
export function btCostRow(
  left: Float32Array,
  right: Float32Array,
  offset: number,
  width: number,
  minD: number,
  maxD: number,
  outside: number,
  out: Float32Array,
): void {
// The cost-row loop (levels, candidates outside the right image) has the shape of census.ts's
// Hamming volume on purpose: each fills its own cost kind in its innermost loop.
  const D = maxD - minD + 1;
  const loL = new Float32Array(width);
  const hiL = new Float32Array(width);
  const loR = new Float32Array(width);
  const hiR = new Float32Array(width);
  btExtremes(left, offset, width, loL, hiL);
  btExtremes(right, offset, width, loR, hiR);
  for (let x = 0; x < width; x++) {
    const iL = left[offset + x];
    const base = x * D;
    for (let k = 0; k < D; k++) {
      const xr = x - (minD + k);
      if (xr < 0 || xr >= width) {
        out[base + k] = outside;
        continue;
      }
      out[base + k] = btPair(iL, loL[x], hiL[x], right[offset + xr], loR[xr], hiR[xr]);
    }
  }
}
