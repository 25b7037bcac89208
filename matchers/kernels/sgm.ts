/**
 * Semi-global matching path aggregation (H. Hirschmüller, "Stereo processing by
 * semiglobal matching and mutual information", IEEE TPAMI 30(2), 2008; first
 * published at CVPR 2005), row by row, in 16-bit lanes.
 *
 * Along a path direction r:
 *   L_r(p,d) = C(p,d) + min( L_r(p-r,d), L_r(p-r,d-1) + P1, L_r(p-r,d+1) + P1,
 *                            min_k L_r(p-r,k) + P2' ) - min_k L_r(p-r,k)
 * and the aggregate S(p,d) = sum over paths of L_r(p,d).
 * Where p - r lies outside the image, L_r(p,d) = C(p,d).
 *
 * P2 across intensity edges (our choice, documented): with an integer k > 0,
 *   P2' = max(P1, floor(P2 * k / (k + |I(p) - I(p-r)|)))
 * which is P2 / (1 + |dI| / k) rounded down and never below P1; k = 0 keeps P2'
 * = P2 everywhere. Integer arithmetic on 8-bit luminance, so the TypeScript and the
 * WebAssembly kernels agree bit for bit.
 *
 * Overflow (why uint16 lanes suffice). Costs are clamped to C <= SGM_MAX_COST = 255
 * when written, and P2' <= P2 <= SGM_MAX_P2 = 7936. Let m = min_k L_r(p-r,k).
 * Every candidate of the inner min is >= m (L_r(p-r,d) >= m and P1, P2' >= 0), so
 * L_r(p,d) >= C(p,d) >= 0: no underflow. The last candidate is m + P2', so the
 * inner min is <= m + P2' and L_r(p,d) <= C(p,d) + P2' <= 255 + 7936 = 8191.
 * Intermediate values: L + P1 <= 8191 + 7936 < 65535 (P1 <= P2), m + P2' likewise.
 * With at most 8 paths, S <= 8 * 8191 = 65528 < 65536: the plain 16-bit sum of
 * real levels never wraps.
 *
 * Memory layout (shared by this TypeScript kernel and the WebAssembly one in
 * matchers/sgm/assembly/sgm.ts): one arena of bytes, everything at byte offsets.
 *   cost, sum: H * W * Dp uint16, index (y * W + x) * Dp + (d - minD);
 *   Dp = D rounded up to a multiple of 8 (SIMD lanes); padded levels are ignored.
 *   gray: H * W uint8 (rounded luminance) for P2'.
 *   rows: for each of the 4 directions of a pass, a W * Dp uint16 row of L, twice
 *         (previous row and current row, swapped by the caller);
 *   mins: for each direction, W uint16 minima, twice likewise.
 * Inside a row of L, padded levels hold 0xFFFF so that they never win a minimum.
 *
 * Directions of one pass, for a pass stepping `step` = +1 (left to right, top to
 * bottom) or -1 (right to left, bottom to top): the previous pixel p - r is
 *   dir 0: (x - step, y)            horizontal
 *   dir 1: (x - step, y - step)     diagonal
 *   dir 2: (x,        y - step)     vertical
 *   dir 3: (x + step, y - step)     the other diagonal
 * 4 paths use directions 0 and 2 of both passes, 8 paths all four.
 */

/** Costs written into the volume must be clamped to this (see the overflow proof). */
export const SGM_MAX_COST = 255;
/** Largest allowed P2 (see the overflow proof). */
export const SGM_MAX_P2 = 7936;
/** Value of padded levels inside rows of L. */
export const SGM_PAD = 0xffff;

/** Levels rounded up to a multiple of 8 (one v128 holds 8 uint16 lanes). */
export function paddedLevels(levels: number): number {
  return (levels + 7) & ~7;
}

/** Byte offsets of every buffer in the arena. */
export interface SgmLayout {
  readonly width: number;
  readonly height: number;
  /** Real levels. */
  readonly levels: number;
  /** Padded levels (multiple of 8). */
  readonly stride: number;
  readonly cost: number;
  readonly sum: number;
  readonly gray: number;
  /** Two groups of 4 row buffers each (W * stride uint16). */
  readonly rows: readonly [number, number];
  /** Two groups of 4 minima buffers each (W uint16). */
  readonly mins: readonly [number, number];
  /** Census words per pixel of bitsL / bitsR. */
  readonly words: number;
  /** Left and right luminance (W * H float32), census strings (W * H * words uint32),
   *  left and right disparity (W * H float32): used by the WebAssembly pipeline. */
  readonly imgL: number;
  readonly imgR: number;
  readonly bitsL: number;
  readonly bitsR: number;
  readonly dispL: number;
  readonly dispR: number;
  /** 2 * W int32 of scratch for the right-view WTA. */
  readonly scratch: number;
  /** Total bytes. */
  readonly bytes: number;
}

/** First 64 KiB stay free for the WebAssembly module's own data. */
export const ARENA_BASE = 65536;

function align16(n: number): number {
  return (n + 15) & ~15;
}

export function sgmLayout(width: number, height: number, levels: number, words = 2): SgmLayout {
  const stride = paddedLevels(levels);
  const vol = width * height * stride * 2;
  const row = width * stride * 2;
  let at = ARENA_BASE;
  const cost = at;
  at = align16(at + vol);
  const sum = at;
  at = align16(at + vol);
  const gray = at;
  at = align16(at + width * height);
  const rowsA = at;
  at = align16(at + 4 * row);
  const rowsB = at;
  at = align16(at + 4 * row);
  const minsA = at;
  at = align16(at + 4 * width * 2);
  const minsB = at;
  at = align16(at + 4 * width * 2);
  const n = width * height;
  const imgL = at;
  at = align16(at + n * 4);
  const imgR = at;
  at = align16(at + n * 4);
  const bitsL = at;
  at = align16(at + n * words * 4);
  const bitsR = at;
  at = align16(at + n * words * 4);
  const dispL = at;
  at = align16(at + n * 4);
  const dispR = at;
  at = align16(at + n * 4);
  const scratch = at;
  at = align16(at + width * 8);
  return {
    scratch,
    words,
    imgL,
    imgR,
    bitsL,
    bitsR,
    dispL,
    dispR,
    width,
    height,
    levels,
    stride,
    cost,
    sum,
    gray,
    rows: [rowsA, rowsB],
    mins: [minsA, minsB],
    bytes: at,
  };
}

/**
 * Scalar TypeScript kernel: aggregates one image row for the enabled directions of
 * one pass. The WebAssembly kernel `pathRow` has the same arguments (byte offsets)
 * and must give the same bytes. Positional on purpose: a wasm export takes numbers
 * only, and sharing its signature lets sgm/aggregate.ts drive either kernel through
 * one call site (an options object would need a second adapter per row).
 *
 * @param u16 uint16 view of the arena; @param u8 uint8 view of the same arena
 * @param costRow byte offset of C(row y, x = 0); @param sumRow likewise in S
 * @param grayRow byte offset of gray(row y); @param grayPrev of the previous row in this pass
 * @param prevRows/curRows byte offsets of the 4 row buffers of the previous/current row
 * @param prevMins/curMins byte offsets of the 4 minima buffers
 * @param hasPrev 1 when a previous row exists in this pass
 * @param dirMask bit i enables direction i
 * @param accumulate 0: S = sum of this pass's L; 1: S += sum of this pass's L
 */
export function pathRowTs(
  u16: Uint16Array,
  u8: Uint8Array,
  costRow: number,
  sumRow: number,
  grayRow: number,
  grayPrev: number,
  width: number,
  levels: number,
  stride: number,
  step: number,
  prevRows: number,
  curRows: number,
  prevMins: number,
  curMins: number,
  hasPrev: number,
  dirMask: number,
  p1: number,
  p2: number,
  edgeK: number,
  accumulate: number,
): void {
  const rowLen = width * stride; // uint16 per row buffer
  const c0 = costRow >> 1;
  const s0 = sumRow >> 1;
  const pr0 = prevRows >> 1;
  const cr0 = curRows >> 1;
  const pm0 = prevMins >> 1;
  const cm0 = curMins >> 1;
  const xStart = step > 0 ? 0 : width - 1;
  for (let i = 0; i < width; i++) {
    const x = xStart + i * step;
    const cBase = c0 + x * stride;
    const g = u8[grayRow + x];
    for (let dir = 0; dir < 4; dir++) {
      if ((dirMask & (1 << dir)) === 0) continue;
      // neighbour p - r
      let nx: number;
      let rowBase: number; // uint16 offset of the neighbour's row buffer of this direction
      let minBase: number;
      let gn: number;
      let ok: boolean;
      if (dir === 0) {
        nx = x - step;
        ok = nx >= 0 && nx < width;
        rowBase = cr0 + dir * rowLen;
        minBase = cm0 + dir * width;
        gn = ok ? u8[grayRow + nx] : 0;
      } else {
        nx = dir === 1 ? x - step : dir === 2 ? x : x + step;
        ok = hasPrev !== 0 && nx >= 0 && nx < width;
        rowBase = pr0 + dir * rowLen;
        minBase = pm0 + dir * width;
        gn = ok ? u8[grayPrev + nx] : 0;
      }
      const out = cr0 + dir * rowLen + x * stride;
      let mn = SGM_PAD;
      if (!ok) {
        for (let k = 0; k < stride; k++) {
          if (k < levels) {
            const v = u16[cBase + k];
            u16[out + k] = v;
            if (v < mn) mn = v;
          } else u16[out + k] = SGM_PAD;
        }
      } else {
        const prev = rowBase + nx * stride;
        const mp = u16[minBase + nx];
        let p2e = p2;
        if (edgeK > 0) {
          const dI = g > gn ? g - gn : gn - g;
          p2e = Math.floor((p2 * edgeK) / (edgeK + dI));
          if (p2e < p1) p2e = p1;
        }
        const t2 = mp + p2e;
        // real levels; padded levels of `prev` hold SGM_PAD, so L(d+1) past the last
        // real level reads as SGM_PAD, as in the SIMD kernel
        let before = SGM_PAD; // L'(d - 1)
        let here = u16[prev]; // L'(d)
        const cb = cBase;
        for (let k = 0; k < levels; k++) {
          const after = k + 1 < levels ? u16[prev + k + 1] : SGM_PAD; // L'(d + 1)
          let nb = (before < after ? before : after) + p1;
          if (nb > SGM_PAD) nb = SGM_PAD; // saturating add, as i16x8.add_sat_u
          let m = here < nb ? here : nb;
          if (t2 < m) m = t2;
          const v = (u16[cb + k] + m - mp) & 0xffff;
          u16[out + k] = v;
          if (v < mn) mn = v;
          before = here;
          here = after;
        }
        for (let k = levels; k < stride; k++) u16[out + k] = SGM_PAD;
      }
      u16[cm0 + dir * width + x] = mn;
    }
    // S at this pixel (wrapping 16-bit adds, as i16x8.add; real levels never wrap)
    const sBase = s0 + x * stride;
    const lBase = cr0 + x * stride;
    const keep = accumulate !== 0 ? 0xffff : 0;
    if (dirMask === 15) {
      const o1 = lBase + rowLen;
      const o2 = o1 + rowLen;
      const o3 = o2 + rowLen;
      for (let k = 0; k < stride; k++)
        u16[sBase + k] = (u16[sBase + k] & keep) + u16[lBase + k] + u16[o1 + k] + u16[o2 + k] + u16[o3 + k];
    } else {
      for (let k = 0; k < stride; k++) {
        let acc = u16[sBase + k] & keep;
        for (let dir = 0; dir < 4; dir++) if ((dirMask & (1 << dir)) !== 0) acc += u16[lBase + dir * rowLen + k];
        u16[sBase + k] = acc;
      }
    }
  }
}
