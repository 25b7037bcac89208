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
 * Searches gallop from the low-d end, where a surface rising to the right inserts, so
 * they are O(1) there; a surface falling to the right collapses the front. Entries more
 * than (row disparity span + tol) columns to the right can neither occlude nor dominate
 * anything still to come; those at the head of the front are dropped, which bounds the
 * front on smooth rows by about the disparity span. Worst case O(W * F) element moves per
 * row (F = front size <= W). Tests compare it with the brute-force O(W^2) definition
 * (occlusionReference) on random rows.
 */

export const OCCLUDED = 1;
export const OUTSIDE = 2;

/**
 * Occlusion mask (width * height bytes, row-major): 0 visible or unknown truth,
 * 1 occluded, 2 outside the right frame. See the file comment for the exact rule.
 */
export function deriveOcclusion(truth: Float32Array, width: number, height: number, tol: number, tau: number): Uint8Array {
  checkArgs(truth, width, height, tol, tau);
  const out = new Uint8Array(width * height);
  // Front entries [head, size), stored with d DEcreasing along the array (so the low-d
  // end, where a surface rising to the right inserts, is the array's end):
  // frontD[head] > frontD[head + 1] > ... and the same for frontU; frontX = column.
  const frontD = new Float64Array(width);
  const frontU = new Float64Array(width);
  const frontX = new Int32Array(width);
  const right = width - 0.5;
  const tolPos = tol > 0 ? tol : 0;
  for (let y = 0; y < height; y++) {
    const row = y * width;
    // Reach: q can occlude p only if x_q - x_p <= d_q - d_p + tol <= span + tol, and can
    // dominate a newer entry r only if x_q - x_r <= d_q - d_r <= span. Entries farther
    // right than that are stale for every pixel still to come; those at the head of the
    // front are dropped (only an optimisation: stale entries never change an answer).
    let dMin = Infinity;
    let dMax = -Infinity;
    for (let x = 0; x < width; x++) {
      const d = truth[row + x];
      if (d - d === 0) {
        if (d < dMin) dMin = d;
        if (d > dMax) dMax = d;
      }
    }
    const reach = dMax - dMin + tolPos;
    let head = 0;
    let size = 0;
    for (let x = width - 1; x >= 0; x--) {
      const d = truth[row + x];
      if (!(d - d === 0)) continue; // NaN or infinite: neither occluder nor occluded
      while (head < size && frontX[head] - x > reach) head++;
      const u = x - d;
      if (u < -0.5 || u > right) {
        out[row + x] = OUTSIDE;
      } else if (size > head) {
        // The last entry with frontD > d + tau has the smallest u among the candidates.
        const i = firstAtOrBelow(frontD, head, size, d + tau);
        if (i > head && frontU[i - 1] <= u + tol) out[row + x] = OCCLUDED;
      }
      // Insert (d, u). lo = first entry with frontD <= d. Is the new pixel dominated (an
      // entry with d' >= d and u' <= u)? The smallest u among entries with d' >= d sits
      // at lo when frontD[lo] === d (d strictly decreasing: at most one), else at lo - 1.
      const lo = firstAtOrBelow(frontD, head, size, d);
      if (lo < size && frontD[lo] === d && frontU[lo] <= u) continue;
      if (lo > head && frontU[lo - 1] <= u) continue;
      // Entries from lo on have frontD <= d; those with frontU >= u are dominated.
      let end = lo;
      while (end < size && frontU[end] >= u) end++;
      const removed = end - lo;
      if (removed === 0) {
        if (lo < size) {
          frontD.copyWithin(lo + 1, lo, size);
          frontU.copyWithin(lo + 1, lo, size);
          frontX.copyWithin(lo + 1, lo, size);
        }
        size++;
      } else if (removed > 1) {
        frontD.copyWithin(lo + 1, end, size);
        frontU.copyWithin(lo + 1, end, size);
        frontX.copyWithin(lo + 1, end, size);
        size -= removed - 1;
      }
      frontD[lo] = d;
      frontU[lo] = u;
      frontX[lo] = x;
    }
  }
  return out;
}

/**
 * First index i in [head, size) with fd[i] <= key (fd strictly decreasing), or size.
 * Galloping search from the end: O(1) when the answer is at the end (the common case
 * of a surface rising to the right), O(log k) when it is k entries from the end.
 */
function firstAtOrBelow(fd: Float64Array, head: number, size: number, key: number): number {
  if (size === head || fd[size - 1] > key) return size;
  let hi = size - 1; // fd[hi] <= key
  let step = 1;
  let lo = hi - step;
  while (lo >= head && fd[lo] <= key) {
    hi = lo;
    step <<= 1;
    lo = hi - step;
  }
  let a = lo < head ? head : lo + 1;
  while (a < hi) {
    const mid = (a + hi) >>> 1;
    if (fd[mid] > key) a = mid + 1;
    else hi = mid;
  }
  return hi;
}

/**
 * The definition applied literally, O(W^2) per row: the reference the tests compare
 * deriveOcclusion with. Same values (0, OCCLUDED, OUTSIDE).
 */
export function occlusionReference(truth: Float32Array, width: number, height: number, tol: number, tau: number): Uint8Array {
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
