// AssemblyScript: the SGM path aggregation of one image row with 128-bit SIMD,
// 8 disparity levels (uint16 lanes) per vector. Same arguments, memory layout and
// results as pathRowTs in matchers/kernels/sgm.ts (the scalar reference; read the
// overflow proof there). Compiled by scripts/build-wasm.sh with --enable simd -O3.

import { hmin16 } from '../../kernels/assembly/shared/lanes';

const PAD: i32 = 0xffff;
// 256 int32 of scratch for the P2' table, inside the first 64 KiB that the host leaves
// to this module (the module has no data segments).
const P2_TABLE: usize = 1024;

// L of one pixel and one direction; returns min_k L.
@inline
function pathPixel(cPtr: usize, prevPtr: usize, outPtr: usize, nblocks: i32, padMask: v128, mp: i32, p1: i32, p2e: i32): i32 {
  const vp1 = i16x8.splat(<i16>p1);
  const vt2 = i16x8.splat(<i16>(mp + p2e));
  const vmp = i16x8.splat(<i16>mp);
  const ones = i16x8.splat(<i16>PAD);
  let vmin = ones;
  let before = ones; // block b - 1 of the previous L (all PAD before block 0)
  let cur = v128.load(prevPtr);
  const last = nblocks - 1;
  for (let b = 0; b < nblocks; b++) {
    const off = <usize>(b << 4);
    const next = b < last ? v128.load(prevPtr + off + 16) : ones;
    let l = lBlock(before, cur, next, v128.load(cPtr + off), vp1, vt2, vmp);
    if (b == last) l = v128.or(l, padMask);
    v128.store(outPtr + off, l);
    vmin = i16x8.min_u(vmin, l);
    before = cur;
    cur = next;
  }
  return hmin16(vmin);
}

// One block of L for one direction: C + min(L'(d), min(L'(d-1), L'(d+1)) + P1, m' + P2') - m'.
@inline
function lBlock(before: v128, cur: v128, next: v128, c: v128, vp1: v128, vt2: v128, vmp: v128): v128 {
  const lm = i16x8.shuffle(before, cur, 7, 8, 9, 10, 11, 12, 13, 14);
  const lp = i16x8.shuffle(cur, next, 1, 2, 3, 4, 5, 6, 7, 8);
  let m = i16x8.min_u(cur, i16x8.add_sat_u(i16x8.min_u(lm, lp), vp1));
  m = i16x8.min_u(m, vt2);
  return i16x8.sub(i16x8.add(c, m), vmp);
}

// All four directions of a pass at one interior pixel (every p - r inside the image),
// fused block by block, with S updated in the same loop. Same results as four
// pathPixel calls followed by the S loop of pathRow.
@inline
function fusedPixel(
  cPtr: usize,
  sPtr: usize,
  outPtr: usize,
  rowBytes: usize,
  minsOut: usize,
  minStride: usize,
  p0: usize,
  p1: usize,
  p2: usize,
  p3: usize,
  mp0: i32,
  mp1: i32,
  mp2: i32,
  mp3: i32,
  t20: i32,
  t21: i32,
  t22: i32,
  t23: i32,
  nblocks: i32,
  padMask: v128,
  pen1: i32,
  accumulate: i32,
): void {
  const vp1 = i16x8.splat(<i16>pen1);
  const ones = i16x8.splat(<i16>PAD);
  const zero = i16x8.splat(0);
  const vmp0 = i16x8.splat(<i16>mp0);
  const vmp1 = i16x8.splat(<i16>mp1);
  const vmp2 = i16x8.splat(<i16>mp2);
  const vmp3 = i16x8.splat(<i16>mp3);
  const vt0 = i16x8.splat(<i16>t20);
  const vt1 = i16x8.splat(<i16>t21);
  const vt2 = i16x8.splat(<i16>t22);
  const vt3 = i16x8.splat(<i16>t23);
  let b0 = ones;
  let b1 = ones;
  let b2 = ones;
  let b3 = ones;
  let c0 = v128.load(p0);
  let c1 = v128.load(p1);
  let c2 = v128.load(p2);
  let c3 = v128.load(p3);
  let m0 = ones;
  let m1 = ones;
  let m2 = ones;
  let m3 = ones;
  const o1 = outPtr + rowBytes;
  const o2 = o1 + rowBytes;
  const o3 = o2 + rowBytes;
  const last = nblocks - 1;
  for (let b = 0; b < nblocks; b++) {
    const off = <usize>(b << 4);
    const isLast = b == last;
    const c = v128.load(cPtr + off);
    let acc = accumulate != 0 ? v128.load(sPtr + off) : zero;
    const n0 = isLast ? ones : v128.load(p0 + off + 16);
    const n1 = isLast ? ones : v128.load(p1 + off + 16);
    const n2 = isLast ? ones : v128.load(p2 + off + 16);
    const n3 = isLast ? ones : v128.load(p3 + off + 16);
    let l0 = lBlock(b0, c0, n0, c, vp1, vt0, vmp0);
    let l1 = lBlock(b1, c1, n1, c, vp1, vt1, vmp1);
    let l2 = lBlock(b2, c2, n2, c, vp1, vt2, vmp2);
    let l3 = lBlock(b3, c3, n3, c, vp1, vt3, vmp3);
    if (isLast) {
      l0 = v128.or(l0, padMask);
      l1 = v128.or(l1, padMask);
      l2 = v128.or(l2, padMask);
      l3 = v128.or(l3, padMask);
    }
    v128.store(outPtr + off, l0);
    v128.store(o1 + off, l1);
    v128.store(o2 + off, l2);
    v128.store(o3 + off, l3);
    m0 = i16x8.min_u(m0, l0);
    m1 = i16x8.min_u(m1, l1);
    m2 = i16x8.min_u(m2, l2);
    m3 = i16x8.min_u(m3, l3);
    acc = i16x8.add(i16x8.add(acc, i16x8.add(l0, l1)), i16x8.add(l2, l3));
    v128.store(sPtr + off, acc);
    b0 = c0;
    c0 = n0;
    b1 = c1;
    c1 = n1;
    b2 = c2;
    c2 = n2;
    b3 = c3;
    c3 = n3;
  }
  store<u16>(minsOut, <u16>hmin16(m0));
  store<u16>(minsOut + minStride, <u16>hmin16(m1));
  store<u16>(minsOut + 2 * minStride, <u16>hmin16(m2));
  store<u16>(minsOut + 3 * minStride, <u16>hmin16(m3));
}

// First pixel of a path: L = C (padded lanes PAD); returns min_k L.
@inline
function startPixel(cPtr: usize, outPtr: usize, nblocks: i32, padMask: v128): i32 {
  let vmin = i16x8.splat(<i16>PAD);
  const last = nblocks - 1;
  for (let b = 0; b < nblocks; b++) {
    const off = <usize>(b << 4);
    let l = v128.load(cPtr + off);
    if (b == last) l = v128.or(l, padMask);
    v128.store(outPtr + off, l);
    vmin = i16x8.min_u(vmin, l);
  }
  return hmin16(vmin);
}

export function pathRow(
  costRow: usize,
  sumRow: usize,
  grayRow: usize,
  grayPrev: usize,
  width: i32,
  levels: i32,
  stride: i32,
  step: i32,
  prevRows: usize,
  curRows: usize,
  prevMins: usize,
  curMins: usize,
  hasPrev: i32,
  dirMask: i32,
  p1: i32,
  p2: i32,
  edgeK: i32,
  accumulate: i32,
): void {
  const nblocks = stride >> 3;
  const rowBytes = <usize>(width * stride * 2);
  const pxBytes = <usize>(stride * 2);
  const padMask = padMaskFor(levels, nblocks);
  // P2' for every |dI| in 0..255 (integer division once per row, not per pixel)
  if (edgeK > 0) {
    for (let dI = 0; dI < 256; dI++) {
      let v = (p2 * edgeK) / (edgeK + dI);
      if (v < p1) v = p1;
      store<i32>(P2_TABLE + (<usize>dI << 2), v);
    }
  }
  const xStart = step > 0 ? 0 : width - 1;
  const minStride = <usize>(width * 2);
  for (let i = 0; i < width; i++) {
    const x = xStart + i * step;
    const cPtr = costRow + <usize>x * pxBytes;
    const g = <i32>load<u8>(grayRow + <usize>x);
    if (dirMask == 15 && hasPrev != 0 && i > 0 && x > 0 && x < width - 1) {
      // interior pixel, all four directions: fused
      const xa = x - step;
      const xb = x + step;
      const mp0 = <i32>load<u16>(curMins + (<usize>xa << 1));
      const mp1 = <i32>load<u16>(prevMins + minStride + (<usize>xa << 1));
      const mp2 = <i32>load<u16>(prevMins + 2 * minStride + (<usize>x << 1));
      const mp3 = <i32>load<u16>(prevMins + 3 * minStride + (<usize>xb << 1));
      let q0 = p2;
      let q1 = p2;
      let q2 = p2;
      let q3 = p2;
      if (edgeK > 0) {
        const g0 = <i32>load<u8>(grayRow + <usize>xa);
        const g1 = <i32>load<u8>(grayPrev + <usize>xa);
        const g2 = <i32>load<u8>(grayPrev + <usize>x);
        const g3 = <i32>load<u8>(grayPrev + <usize>xb);
        q0 = load<i32>(P2_TABLE + (<usize>(g > g0 ? g - g0 : g0 - g) << 2));
        q1 = load<i32>(P2_TABLE + (<usize>(g > g1 ? g - g1 : g1 - g) << 2));
        q2 = load<i32>(P2_TABLE + (<usize>(g > g2 ? g - g2 : g2 - g) << 2));
        q3 = load<i32>(P2_TABLE + (<usize>(g > g3 ? g - g3 : g3 - g) << 2));
      }
      fusedPixel(
        cPtr,
        sumRow + <usize>x * pxBytes,
        curRows + <usize>x * pxBytes,
        rowBytes,
        curMins + (<usize>x << 1),
        minStride,
        curRows + <usize>xa * pxBytes,
        prevRows + rowBytes + <usize>xa * pxBytes,
        prevRows + 2 * rowBytes + <usize>x * pxBytes,
        prevRows + 3 * rowBytes + <usize>xb * pxBytes,
        mp0,
        mp1,
        mp2,
        mp3,
        mp0 + q0,
        mp1 + q1,
        mp2 + q2,
        mp3 + q3,
        nblocks,
        padMask,
        p1,
        accumulate,
      );
      continue;
    }
    for (let dir = 0; dir < 4; dir++) {
      if ((dirMask & (1 << dir)) == 0) continue;
      let nx: i32;
      let ok: bool;
      let rowBase: usize;
      let minBase: usize;
      let gn: i32 = 0;
      if (dir == 0) {
        nx = x - step;
        ok = nx >= 0 && nx < width;
        rowBase = curRows;
        minBase = curMins;
        if (ok) gn = <i32>load<u8>(grayRow + <usize>nx);
      } else {
        nx = dir == 1 ? x - step : dir == 2 ? x : x + step;
        ok = hasPrev != 0 && nx >= 0 && nx < width;
        rowBase = prevRows + <usize>dir * rowBytes;
        minBase = prevMins + <usize>(dir * width * 2);
        if (ok) gn = <i32>load<u8>(grayPrev + <usize>nx);
      }
      const outPtr = curRows + <usize>dir * rowBytes + <usize>x * pxBytes;
      let mn: i32;
      if (!ok) {
        mn = startPixel(cPtr, outPtr, nblocks, padMask);
      } else {
        const mp = <i32>load<u16>(minBase + <usize>(nx << 1));
        let p2e = p2;
        if (edgeK > 0) p2e = load<i32>(P2_TABLE + (<usize>(g > gn ? g - gn : gn - g) << 2));
        mn = pathPixel(cPtr, rowBase + <usize>nx * pxBytes, outPtr, nblocks, padMask, mp, p1, p2e);
      }
      store<u16>(curMins + <usize>(dir * width * 2) + <usize>(x << 1), <u16>mn);
    }
    // S at this pixel
    const sPtr = sumRow + <usize>x * pxBytes;
    const lPtr = curRows + <usize>x * pxBytes;
    for (let b = 0; b < nblocks; b++) {
      const off = <usize>(b << 4);
      let acc = accumulate != 0 ? v128.load(sPtr + off) : i16x8.splat(0);
      if (dirMask & 1) acc = i16x8.add(acc, v128.load(lPtr + off));
      if (dirMask & 2) acc = i16x8.add(acc, v128.load(lPtr + rowBytes + off));
      if (dirMask & 4) acc = i16x8.add(acc, v128.load(lPtr + 2 * rowBytes + off));
      if (dirMask & 8) acc = i16x8.add(acc, v128.load(lPtr + 3 * rowBytes + off));
      v128.store(sPtr + off, acc);
    }
  }
}

// ---------------------------------------------------------------------------
// Census transform of one image row (same bit order, comparison and borders as
// censusTransform in matchers/kernels/census.ts: neighbours in row-major order
// skipping the centre, bit k of word k/32 set when neighbour < centre, coordinates
// clamped at the borders). img: f32 per pixel; bits: `words` u32 per pixel.
export function censusRow(img: usize, bits: usize, width: i32, height: i32, y: i32, winW: i32, winH: i32, words: i32): void {
  const rw = (winW - 1) >> 1;
  const rh = (winH - 1) >> 1;
  const xmax = width - 1;
  const ymax = height - 1;
  // SIMD: 4 pixels at a time where the whole window is inside the image, 1-2 words
  let x = 0;
  const simd = words <= 2 && y - rh >= 0 && y + rh <= ymax;
  if (simd) {
    while (x < rw && x < width) {
      censusPixel(img, bits, width, height, x, y, rw, rh, words);
      x++;
    }
    for (; x + 3 + rw <= xmax; x += 4) {
      const c4 = v128.load(img + (<usize>(y * width + x) << 2));
      let acc0 = i32x4.splat(0);
      let acc1 = i32x4.splat(0);
      let bit: i32 = 0;
      for (let dy = -rh; dy <= rh; dy++) {
        const rowPtr = img + (<usize>((y + dy) * width + x) << 2);
        for (let dx = -rw; dx <= rw; dx++) {
          if (dx == 0 && dy == 0) continue;
          const m = f32x4.lt(v128.load(rowPtr + (<usize>(dx << 2))), c4);
          if (bit < 32) acc0 = v128.or(acc0, v128.and(m, i32x4.splat(1 << bit)));
          else acc1 = v128.or(acc1, v128.and(m, i32x4.splat(1 << (bit - 32))));
          bit++;
        }
      }
      const dst = bits + (<usize>((y * width + x) * words) << 2);
      if (words == 2) {
        v128.store(dst, i32x4.shuffle(acc0, acc1, 0, 4, 1, 5));
        v128.store(dst + 16, i32x4.shuffle(acc0, acc1, 2, 6, 3, 7));
      } else {
        v128.store(dst, acc0);
      }
    }
  }
  for (; x < width; x++) censusPixel(img, bits, width, height, x, y, rw, rh, words);
}

// One pixel of the census transform, scalar, with clamped coordinates.
function censusPixel(img: usize, bits: usize, width: i32, height: i32, x: i32, y: i32, rw: i32, rh: i32, words: i32): void {
  const xmax = width - 1;
  const ymax = height - 1;
  {
    const c = load<f32>(img + (<usize>(y * width + x) << 2));
    const base = bits + (<usize>((y * width + x) * words) << 2);
    let word: u32 = 0;
    let bit: i32 = 0;
    let w: i32 = 0;
    for (let dy = -rh; dy <= rh; dy++) {
      let yy = y + dy;
      yy = yy < 0 ? 0 : yy > ymax ? ymax : yy;
      const rowPtr = img + (<usize>(yy * width) << 2);
      for (let dx = -rw; dx <= rw; dx++) {
        if (dx == 0 && dy == 0) continue;
        let xx = x + dx;
        xx = xx < 0 ? 0 : xx > xmax ? xmax : xx;
        const v = load<f32>(rowPtr + (<usize>xx << 2));
        if (v < c) word |= (<u32>1) << <u32>bit;
        bit++;
        if (bit == 32) {
          store<u32>(base + (<usize>w << 2), word);
          w++;
          word = 0;
          bit = 0;
        }
      }
    }
    if (bit > 0) store<u32>(base + (<usize>w << 2), word);
  }
}

// Census Hamming costs of one row into the cost volume (stride levels per pixel),
// clamped to 255; candidates with x - d outside the row get `outside`.
export function censusCostRow(
  bitsL: usize,
  bitsR: usize,
  costRow: usize,
  width: i32,
  y: i32,
  levels: i32,
  stride: i32,
  minD: i32,
  words: i32,
  outside: i32,
): void {
  const row = y * width;
  for (let x = 0; x < width; x++) {
    const base = costRow + (<usize>(x * stride) << 1);
    let kLo = x - width + 1 - minD;
    if (kLo < 0) kLo = 0;
    let kHi = x - minD;
    if (kHi > levels - 1) kHi = levels - 1;
    for (let k = 0; k < kLo && k < levels; k++) store<u16>(base + (<usize>k << 1), <u16>outside);
    for (let k = kHi + 1 > 0 ? kHi + 1 : 0; k < levels; k++) store<u16>(base + (<usize>k << 1), <u16>outside);
    if (words == 2) {
      const pl = bitsL + (<usize>((row + x) * 2) << 2);
      const a0 = load<u32>(pl);
      const a1 = load<u32>(pl + 4);
      const a = i64x2.splat(load<i64>(pl));
      let k = kLo;
      // scalar up to a multiple of 8, then 8 levels (8 right pixels, descending) per step
      let kA = (kLo + 7) & ~7;
      if (kA > kHi + 1) kA = kHi + 1;
      for (; k < kA; k++) {
        const pr = bitsR + (<usize>((row + x - minD - k) * 2) << 2);
        const h = <i32>popcnt<u32>(a0 ^ load<u32>(pr)) + <i32>popcnt<u32>(a1 ^ load<u32>(pr + 4));
        store<u16>(base + (<usize>k << 1), <u16>(h > 255 ? 255 : h));
      }
      for (; k + 7 <= kHi; k += 8) {
        // right pixels xr0 .. xr0 + 7 hold levels k + 7 .. k
        const p = bitsR + (<usize>((row + x - minD - k - 7) * 2) << 2);
        const h0 = wordCounts(v128.xor(v128.load(p), a));
        const h1 = wordCounts(v128.xor(v128.load(p + 16), a));
        const h2 = wordCounts(v128.xor(v128.load(p + 32), a));
        const h3 = wordCounts(v128.xor(v128.load(p + 48), a));
        const s01 = i32x4.add(i32x4.shuffle(h0, h1, 0, 2, 4, 6), i32x4.shuffle(h0, h1, 1, 3, 5, 7));
        const s23 = i32x4.add(i32x4.shuffle(h2, h3, 0, 2, 4, 6), i32x4.shuffle(h2, h3, 1, 3, 5, 7));
        const n = i16x8.narrow_i32x4_u(s01, s23);
        // two words give at most 64 < 255: no clamp needed
        v128.store(base + (<usize>k << 1), i16x8.shuffle(n, n, 7, 6, 5, 4, 3, 2, 1, 0));
      }
      for (; k <= kHi; k++) {
        const pr = bitsR + (<usize>((row + x - minD - k) * 2) << 2);
        let h = <i32>popcnt<u32>(a0 ^ load<u32>(pr)) + <i32>popcnt<u32>(a1 ^ load<u32>(pr + 4));
        if (h > 255) h = 255;
        store<u16>(base + (<usize>k << 1), <u16>h);
      }
    } else {
      const pl = bitsL + (<usize>((row + x) * words) << 2);
      for (let k = kLo; k <= kHi; k++) {
        const pr = bitsR + (<usize>((row + x - minD - k) * words) << 2);
        let h: i32 = 0;
        for (let j = 0; j < words; j++) h += <i32>popcnt<u32>(load<u32>(pl + (<usize>j << 2)) ^ load<u32>(pr + (<usize>j << 2)));
        if (h > 255) h = 255;
        store<u16>(base + (<usize>k << 1), <u16>h);
      }
    }
  }
}

// Set bits of each 32-bit lane.
@inline
function wordCounts(v: v128): v128 {
  return i32x4.extadd_pairwise_i16x8_u(i16x8.extadd_pairwise_i8x16_u(i8x16.popcnt(v)));
}

// Parabola vertex offset, as subpixelParabola in matchers/kernels/postprocess.ts.
@inline
function parabola(cm: f64, c0: f64, cp: f64): f64 {
  const den = cm - 2 * c0 + cp;
  if (!(den > 0)) return 0;
  const off = (cm - cp) / (2 * den);
  return off > 0.5 ? 0.5 : off < -0.5 ? -0.5 : off;
}

const EXCLUDED: i32 = 65535;

// Lanes >= levels of the last block of a pixel hold PAD (0xFFFF) in this mask.
function padMaskFor(levels: i32, nblocks: i32): v128 {
  const realInLast = levels - ((nblocks - 1) << 3);
  let m = i16x8.splat(0);
  if (realInLast <= 0) m = i16x8.replace_lane(m, 0, <i16>PAD);
  if (realInLast <= 1) m = i16x8.replace_lane(m, 1, <i16>PAD);
  if (realInLast <= 2) m = i16x8.replace_lane(m, 2, <i16>PAD);
  if (realInLast <= 3) m = i16x8.replace_lane(m, 3, <i16>PAD);
  if (realInLast <= 4) m = i16x8.replace_lane(m, 4, <i16>PAD);
  if (realInLast <= 5) m = i16x8.replace_lane(m, 5, <i16>PAD);
  if (realInLast <= 6) m = i16x8.replace_lane(m, 6, <i16>PAD);
  if (realInLast <= 7) m = i16x8.replace_lane(m, 7, <i16>PAD);
  return m;
}

// Left-view winner-take-all of one row over S (stride levels per pixel), as wta() in
// matchers/kernels/wta.ts: lowest level wins ties, EXCLUDED entries never win,
// uniqueness (uniq > 0): NaN when a level more than 1 away, not EXCLUDED, costs
// <= best * (1 + uniq/100); subpixel parabola at interior winners whose neighbours
// are not excluded. SIMD: padded levels read as EXCLUDED; for an integer c,
// c <= lim exactly when c <= floor(lim), and floor(lim) is capped at 65534 so that
// EXCLUDED never counts.
export function wtaRow(sumRow: usize, out: usize, width: i32, levels: i32, stride: i32, minD: i32, subpix: i32, uniq: f64): void {
  const factor = 1 + uniq / 100;
  const nblocks = stride >> 3;
  const last = nblocks - 1;
  const padMask = padMaskFor(levels, nblocks);
  const ones = i16x8.splat(<i16>PAD);
  for (let x = 0; x < width; x++) {
    const base = sumRow + (<usize>(x * stride) << 1);
    let vmin = ones;
    for (let b = 0; b < nblocks; b++) {
      let v = v128.load(base + (<usize>b << 4));
      if (b == last) v = v128.or(v, padMask);
      vmin = i16x8.min_u(vmin, v);
    }
    const best = hmin16(vmin);
    const o = out + (<usize>x << 2);
    if (best == EXCLUDED) {
      store<f32>(o, NaN);
      continue;
    }
    const vb = i16x8.splat(<i16>best);
    let bl: i32 = -1;
    for (let b = 0; b < nblocks; b++) {
      let v = v128.load(base + (<usize>b << 4));
      if (b == last) v = v128.or(v, padMask);
      const m = i16x8.bitmask(i16x8.eq(v, vb));
      if (m != 0) {
        bl = (b << 3) + ctz<i32>(m);
        break;
      }
    }
    if (uniq > 0) {
      const lim = <f64>best * factor;
      const limInt: i32 = lim >= 65534 ? 65534 : <i32>Math.floor(lim);
      const vl = i16x8.splat(<i16>limInt);
      let cnt: i32 = 0;
      for (let b = 0; b < nblocks; b++) {
        let v = v128.load(base + (<usize>b << 4));
        if (b == last) v = v128.or(v, padMask);
        cnt += popcnt<i32>(i16x8.bitmask(i16x8.le_u(v, vl)));
      }
      // the winner and its two neighbours are allowed
      for (let l = bl - 1; l <= bl + 1; l++) {
        if (l < 0 || l >= levels) continue;
        if (<i32>load<u16>(base + (<usize>l << 1)) <= limInt) cnt--;
      }
      if (cnt > 0) {
        store<f32>(o, NaN);
        continue;
      }
    }
    let d = <f64>(minD + bl);
    if (subpix != 0 && bl > 0 && bl < levels - 1) {
      const cm = <i32>load<u16>(base + (<usize>(bl - 1) << 1));
      const cp = <i32>load<u16>(base + (<usize>(bl + 1) << 1));
      if (cm != EXCLUDED && cp != EXCLUDED) d += parabola(<f64>cm, <f64>best, <f64>cp);
    }
    store<f32>(o, <f32>d);
  }
}

// Right-view winner-take-all of one row from the left S, as wtaRight() in wta.ts:
// dR(xr) = argmin_d S(xr + d, d) over 0 <= xr + d < width, lowest level on ties.
// Reads S in memory order: for each left x and level l, the candidate of xr = x - d;
// for a fixed xr the candidates arrive with l ascending, so a strict `<` keeps the
// lowest level as the reference does. scratch: 2 * width i32.
export function wtaRightRow(sumRow: usize, out: usize, width: i32, levels: i32, stride: i32, minD: i32, subpix: i32, scratch: usize): void {
  const bestR = scratch;
  const blR = scratch + (<usize>width << 2);
  for (let xr = 0; xr < width; xr++) {
    store<i32>(bestR + (<usize>xr << 2), EXCLUDED);
    store<i32>(blR + (<usize>xr << 2), -1);
  }
  for (let x = 0; x < width; x++) {
    const base = sumRow + (<usize>(x * stride) << 1);
    // levels with 0 <= xr = x - minD - l < width
    let lLo = x - minD - (width - 1);
    if (lLo < 0) lLo = 0;
    let lHi = x - minD;
    if (lHi > levels - 1) lHi = levels - 1;
    for (let l = lLo; l <= lHi; l++) {
      const c = <i32>load<u16>(base + (<usize>l << 1));
      const xr = x - minD - l;
      const pb = bestR + (<usize>xr << 2);
      if (c < load<i32>(pb)) {
        store<i32>(pb, c);
        store<i32>(blR + (<usize>xr << 2), l);
      }
    }
  }
  for (let xr = 0; xr < width; xr++) {
    const bl = load<i32>(blR + (<usize>xr << 2));
    const o = out + (<usize>xr << 2);
    if (bl < 0) {
      store<f32>(o, NaN);
      continue;
    }
    const best = load<i32>(bestR + (<usize>xr << 2));
    let d = <f64>(minD + bl);
    const x = xr + minD + bl;
    if (subpix != 0 && bl > 0 && bl < levels - 1 && x > 0 && x < width - 1) {
      const cm = <i32>load<u16>(sumRow + (<usize>((x - 1) * stride + bl - 1) << 1));
      const cp = <i32>load<u16>(sumRow + (<usize>((x + 1) * stride + bl + 1) << 1));
      if (cm != EXCLUDED && cp != EXCLUDED) d += parabola(<f64>cm, <f64>best, <f64>cp);
    }
    store<f32>(o, <f32>d);
  }
}
