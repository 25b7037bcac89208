// AssemblyScript: the SGM path aggregation of one image row with 128-bit SIMD,
// 8 disparity levels (uint16 lanes) per vector. Same arguments, memory layout and
// results as pathRowTs in matchers/kernels/sgm.ts (the scalar reference; read the
// overflow proof there). Compiled by scripts/build-wasm.sh with --enable simd -O3.

const PAD: i32 = 0xffff;

// Smallest lane of a vector of 8 uint16.
@inline
function hmin(v: v128): i32 {
  v = i16x8.min_u(v, i16x8.shuffle(v, v, 4, 5, 6, 7, 0, 1, 2, 3));
  v = i16x8.min_u(v, i16x8.shuffle(v, v, 2, 3, 0, 1, 2, 3, 0, 1));
  v = i16x8.min_u(v, i16x8.shuffle(v, v, 1, 0, 1, 0, 1, 0, 1, 0));
  return <i32>i16x8.extract_lane_u(v, 0);
}

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
    // L(d - 1) and L(d + 1) of the previous pixel
    const lm = i16x8.shuffle(before, cur, 7, 8, 9, 10, 11, 12, 13, 14);
    const lp = i16x8.shuffle(cur, next, 1, 2, 3, 4, 5, 6, 7, 8);
    let m = i16x8.min_u(cur, i16x8.add_sat_u(i16x8.min_u(lm, lp), vp1));
    m = i16x8.min_u(m, vt2);
    let l = i16x8.sub(i16x8.add(v128.load(cPtr + off), m), vmp);
    if (b == last) l = v128.or(l, padMask);
    v128.store(outPtr + off, l);
    vmin = i16x8.min_u(vmin, l);
    before = cur;
    cur = next;
  }
  return hmin(vmin);
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
  return hmin(vmin);
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
  // padded lanes of the last block: lanes >= levels - 8 * (nblocks - 1)
  const realInLast = levels - ((nblocks - 1) << 3);
  let padMask = i16x8.splat(0);
  if (realInLast <= 0) padMask = i16x8.replace_lane(padMask, 0, <i16>PAD);
  if (realInLast <= 1) padMask = i16x8.replace_lane(padMask, 1, <i16>PAD);
  if (realInLast <= 2) padMask = i16x8.replace_lane(padMask, 2, <i16>PAD);
  if (realInLast <= 3) padMask = i16x8.replace_lane(padMask, 3, <i16>PAD);
  if (realInLast <= 4) padMask = i16x8.replace_lane(padMask, 4, <i16>PAD);
  if (realInLast <= 5) padMask = i16x8.replace_lane(padMask, 5, <i16>PAD);
  if (realInLast <= 6) padMask = i16x8.replace_lane(padMask, 6, <i16>PAD);
  if (realInLast <= 7) padMask = i16x8.replace_lane(padMask, 7, <i16>PAD);
  const xStart = step > 0 ? 0 : width - 1;
  for (let i = 0; i < width; i++) {
    const x = xStart + i * step;
    const cPtr = costRow + <usize>x * pxBytes;
    const g = <i32>load<u8>(grayRow + <usize>x);
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
        if (edgeK > 0) {
          const dI = g > gn ? g - gn : gn - g;
          p2e = (p2 * edgeK) / (edgeK + dI);
          if (p2e < p1) p2e = p1;
        }
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
