/**
 * Occlusion derived from the left truth disparity alone, for datasets without a mask.
 *
 * Left pixel p = (x_p, y) with truth d_p lands at u_p = x_p - d_p in the right view.
 *
 * - Occluded (value OCCLUDED = 1): some pixel q of the same row to its right
 *   (x_q > x_p) with valid truth lands at or left of p in the right view and is nearer:
 *       x_q - d_q <= x_p - d_p + tol   and   d_q > d_p + tau.
 *   tol absorbs sub-pixel landing differences, tau ignores occluders that are barely
 *   nearer (a slanted surface never occludes itself: along it u grows with x).
 * - Outside the right frame (value OUTSIDE = 2): u_p < -0.5 or u_p > width - 0.5, i.e.
 *   p lands beyond the span [-0.5, width - 0.5] covered by the right image's pixels.
 *   The right-hand test only matters for negative disparities (principal points that
 *   differ); it is the same "not seen by the right camera" condition on the other edge.
 *   Outside takes precedence over occluded.
 * - Invalid truth (NaN, +-Infinity) is neither occluder nor occluded (value 0).
 * Any non-zero value means "not visible in the right view".
 *
 * Algorithm (exact, one right-to-left sweep per row). While sweeping, keep the Pareto
 * front of the pixels seen so far (all to the right of the current one): a pixel q is
 * dropped when a newer pixel r has d_r >= d_q and u_r <= u_q, because any p that q
 * occludes is then occluded by r as well (d_r >= d_q > d_p + tau, u_r <= u_q <= u_p + tol).
 * On the front, d and u both increase strictly, so "is there a front pixel with
 * d > d_p + tau and u <= u_p + tol" is decided by the front pixel with the smallest
 * d > d_p + tau (it has the smallest u of those): one binary search. Insertion removes a
 * contiguous block of dominated pixels and shifts the rest with copyWithin (a memmove).
 * Cost per row: O(W log F) comparisons plus the shifts, where F is the front size;
 * F stays small on real disparity maps (a surface whose disparity falls to the right
 * collapses the front; one rising to the right appends at the cheap end). The worst
 * case is O(W * F) element moves with F <= W. Tests compare it with the brute-force
 * O(W^2) definition (occlusionReference) on random rows.
 */

export const OCCLUDED = 1;
export const OUTSIDE = 2;

/**
 * Occlusion mask (width * height bytes, row-major): 0 visible or unknown truth,
 * 1 occluded, 2 outside the right frame. See the file comment for the exact rule.
 */
export function deriveOcclusion(
  truth: Float32Array,
  width: number,
  height: number,
  tol: number,
  tau: number,
): Uint8Array {
  checkArgs(truth, width, height, tol, tau);
  const out = new Uint8Array(width * height);
  // Front, stored with d DEcreasing along the array (so the low-d end, where a surface
  // rising to the right inserts, is the array's end): frontD[0] > frontD[1] > ...
  // and frontU[0] > frontU[1] > ...
  const frontD = new Float64Array(width);
  const frontU = new Float64Array(width);
  const right = width - 0.5;
  for (let y = 0; y < height; y++) {
    const row = y * width;
    let size = 0;
    for (let x = width - 1; x >= 0; x--) {
      const d = truth[row + x];
      if (!(d - d === 0)) continue; // NaN or infinite: neither occluder nor occluded
      const u = x - d;
      if (u < -0.5 || u > right) {
        out[row + x] = OUTSIDE;
      } else if (size > 0) {
        // Last front index with frontD > d + tau (front is d-descending): the one with the
        // smallest such d, hence the smallest u among the candidates.
        const thr = d + tau;
        let lo = 0;
        let hi = size; // find first index with frontD <= thr
        while (lo < hi) {
          const mid = (lo + hi) >>> 1;
          if (frontD[mid] > thr) lo = mid + 1;
          else hi = mid;
        }
        if (lo > 0 && frontU[lo - 1] <= u + tol) out[row + x] = OCCLUDED;
      }
      // Insert (d, u) into the front. Pixels it dominates (frontD <= d and frontU >= u)
      // form a contiguous block starting at the first index with frontD <= d.
      let lo = 0;
      let hi = size;
      while (lo < hi) {
        const mid = (lo + hi) >>> 1;
        if (frontD[mid] > d) lo = mid + 1;
        else hi = mid;
      }
      // lo = first index with frontD <= d. Is the new pixel itself dominated (some entry
      // with d' >= d and u' <= u)? The smallest u among entries with d' >= d sits at lo
      // when frontD[lo] === d (d is strictly decreasing, so at most one such entry), else
      // at lo - 1.
      if (lo < size && frontD[lo] === d && frontU[lo] <= u) continue;
      if (lo > 0 && frontU[lo - 1] <= u) continue;
      // Entries from lo on have frontD <= d; those with frontU >= u are dominated.
      let end = lo;
      while (end < size && frontU[end] >= u) end++;
      const removed = end - lo;
      if (removed === 0) {
        if (lo < size) {
          frontD.copyWithin(lo + 1, lo, size);
          frontU.copyWithin(lo + 1, lo, size);
        }
        size++;
      } else if (removed > 1) {
        frontD.copyWithin(lo + 1, end, size);
        frontU.copyWithin(lo + 1, end, size);
        size -= removed - 1;
      }
      frontD[lo] = d;
      frontU[lo] = u;
    }
  }
  return out;
}

/**
 * The definition applied literally, O(W^2) per row: the reference the tests compare
 * deriveOcclusion with. Same values (0, OCCLUDED, OUTSIDE).
 */
export function occlusionReference(
  truth: Float32Array,
  width: number,
  height: number,
  tol: number,
  tau: number,
): Uint8Array {
  checkArgs(truth, width, height, tol, tau);
  const out = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let xp = 0; xp < width; xp++) {
      const dp = truth[row + xp];
      if (!Number.isFinite(dp)) continue;
      if (xp - dp < -0.5 || xp - dp > width - 0.5) {
        out[row + xp] = OUTSIDE;
        continue;
      }
      for (let xq = xp + 1; xq < width; xq++) {
        const dq = truth[row + xq];
        if (!Number.isFinite(dq)) continue;
        if (xq - dq <= xp - dp + tol && dq > dp + tau) {
          out[row + xp] = OCCLUDED;
          break;
        }
      }
    }
  }
  return out;
}

function checkArgs(truth: Float32Array, width: number, height: number, tol: number, tau: number): void {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 0 || height < 0) {
    throw new RangeError(`deriveOcclusion: bad size ${width}x${height}`);
  }
  if (truth.length !== width * height) {
    throw new RangeError(`deriveOcclusion: truth has ${truth.length} values, expected ${width}x${height}`);
  }
  if (!Number.isFinite(tol) || !Number.isFinite(tau)) {
    throw new RangeError(`deriveOcclusion: tol and tau must be finite (got ${tol}, ${tau})`);
  }
}
