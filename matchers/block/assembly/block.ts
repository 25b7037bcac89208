// AssemblyScript: block matching (SAD, SSD) with 128-bit SIMD, one image row per call.
// Compiled by scripts/build-wasm.sh into build/wasm/block.wasm (--enable simd -O3,
// imported memory, stub runtime). The host (matchers/block/fast.ts) lays out every
// buffer and calls, per image row y:
//   wtaRow*   column sums moved down one row (the entering row's differences added, the
//             leaving row's subtracted; addRow* builds row 0's), column by column just
//             before use; horizontal running sum over the window width, masking of candidates
//             outside the right image, left-view WTA (+ uniqueness, subpixel) and the
//             right view's running minimum,
//   finishRight*  the right view's disparities of the row.
// Results equal the TypeScript reference (matchers/block/cost.ts + kernels/wta.ts) run on
// the same rounded luminance, bit for bit (test/matchers/block-wasm.test.ts).
//
// Inputs: left image rows as u8 (luminance rounded to 0..255); the right image as
// "reversed padded rows" RP of `pw` bytes per row: RP[idx] = R[clamp(width-1-minD-idx)],
// so that lanes l = 0, 1, 2, ... of left column x (d = minD + l, right column x - d,
// clamped: the replicate rule of cost.ts) are the consecutive bytes from
// RP + (width - 1 - x). Level l is relative to the host's minD (already clipped to the
// levels that have candidates); stride = levels rounded up to a multiple of 8.
//
// Lane types and overflow (side = window side, odd, <= 51 by the parameter schema;
// the host checks it):
//   "16" kernels (SAD, side <= 15): u16 lanes, 8 levels per v128.
//     |a - b| <= 255; column sum <= side * 255 <= 15 * 255 = 3825; window sum
//     <= side^2 * 255 <= 225 * 255 = 57375 < 65535 = MAX16, which marks an excluded
//     candidate. The running sums are updated modulo 2^16 (i16x8.add/sub wrap), which is
//     exact because every stored value is a true sum that fits.
//   "32" kernels (SAD with side > 15, and SSD): i32 lanes, 4 levels per v128.
//     SSD: (a - b)^2 <= 65025; window sum <= 51^2 * 65025 = 169,130,025 < 2^31 - 1 = MAX32.
//     SAD: <= 51^2 * 255 = 663,255. Differences are taken in i16 lanes (|a - b| <= 255 fits).

import { hmin16 } from '../../kernels/assembly/shared/lanes';

const MAX16: i32 = 0xffff;
const MAX32: i32 = 0x7fffffff;

@inline
function clampI(v: i32, lo: i32, hi: i32): i32 {
  return v < lo ? lo : v > hi ? hi : v;
}

// Smallest lane of 4 i32.
@inline
function hmin32(v: v128): i32 {
  v = i32x4.min_s(v, i32x4.shuffle(v, v, 2, 3, 0, 1));
  v = i32x4.min_s(v, i32x4.shuffle(v, v, 1, 0, 1, 0));
  return i32x4.extract_lane(v, 0);
}

// Subpixel disparity as in kernels/wta.ts + subpixelParabola (postprocess.ts), in f64
// with the same operations, so the float32 result is identical.
@inline
function finalDisparity(minD: i32, bl: i32, cm: i32, c0: i32, cp: i32, okM: bool, okP: bool, subpix: i32): f32 {
  let d = <f64>(minD + bl);
  if (subpix != 0 && okM && okP) {
    const den = <f64>cm - 2.0 * <f64>c0 + <f64>cp;
    if (den > 0) {
      let off = (<f64>cm - <f64>cp) / (2.0 * den);
      off = off > 0.5 ? 0.5 : off < -0.5 ? -0.5 : off;
      d += off;
    }
  }
  return <f32>d;
}

// ---------------------------------------------------------------------------
// Column sums, u16 lanes (SAD). col: width * stride u16, layout [x][level].

// col += |L - R| of one image row.
export function addRow16(col: usize, lRow: usize, rpRow: usize, width: i32, stride: i32): void {
  const nb = stride >> 3;
  const rowBytes = <usize>(stride << 1);
  for (let x = 0; x < width; x++) {
    const lv = i16x8.splat(<i16>load<u8>(lRow + <usize>x));
    const rp = rpRow + <usize>(width - 1 - x);
    const cp = col + <usize>x * rowBytes;
    for (let b = 0; b < nb; b++) {
      const e = i16x8.abs(i16x8.sub(lv, v128.load8x8_u(rp + <usize>(b << 3))));
      const o = cp + <usize>(b << 4);
      v128.store(o, i16x8.add(v128.load(o), e));
    }
  }
}

// Column x: col += |L - R| of the entering row - |L - R| of the leaving row.
@inline
function advanceCol16(col: usize, lIn: usize, rpIn: usize, lOut: usize, rpOut: usize, width: i32, nb: i32, rowBytes: usize, x: i32): void {
  const li = i16x8.splat(<i16>load<u8>(lIn + <usize>x));
  const lo = i16x8.splat(<i16>load<u8>(lOut + <usize>x));
  const ri = rpIn + <usize>(width - 1 - x);
  const ro = rpOut + <usize>(width - 1 - x);
  const cp = col + <usize>x * rowBytes;
  for (let b = 0; b < nb; b++) {
    const k = <usize>(b << 3);
    const ei = i16x8.abs(i16x8.sub(li, v128.load8x8_u(ri + k)));
    const eo = i16x8.abs(i16x8.sub(lo, v128.load8x8_u(ro + k)));
    const o = cp + <usize>(b << 4);
    v128.store(o, i16x8.add(v128.load(o), i16x8.sub(ei, eo)));
  }
}

// ---------------------------------------------------------------------------
// Column sums, i32 lanes (SAD or SSD). col: width * stride i32.

@inline
function errLo(diff: v128, ssd: bool): v128 {
  return ssd ? i32x4.extmul_low_i16x8_s(diff, diff) : i32x4.extend_low_i16x8_u(i16x8.abs(diff));
}
@inline
function errHi(diff: v128, ssd: bool): v128 {
  return ssd ? i32x4.extmul_high_i16x8_s(diff, diff) : i32x4.extend_high_i16x8_u(i16x8.abs(diff));
}

@inline
function addRow32Impl(col: usize, lRow: usize, rpRow: usize, width: i32, stride: i32, ssd: bool): void {
  const n8 = stride >> 3;
  const rowBytes = <usize>(stride << 2);
  for (let x = 0; x < width; x++) {
    const lv = i16x8.splat(<i16>load<u8>(lRow + <usize>x));
    const rp = rpRow + <usize>(width - 1 - x);
    const cp = col + <usize>x * rowBytes;
    for (let b = 0; b < n8; b++) {
      const diff = i16x8.sub(lv, v128.load8x8_u(rp + <usize>(b << 3)));
      const o = cp + <usize>(b << 5);
      v128.store(o, i32x4.add(v128.load(o), errLo(diff, ssd)));
      v128.store(o + 16, i32x4.add(v128.load(o + 16), errHi(diff, ssd)));
    }
  }
}

@inline
function advanceCol32(col: usize, lIn: usize, rpIn: usize, lOut: usize, rpOut: usize, width: i32, n8: i32, rowBytes: usize, x: i32, ssd: bool): void {
  const li = i16x8.splat(<i16>load<u8>(lIn + <usize>x));
  const lo = i16x8.splat(<i16>load<u8>(lOut + <usize>x));
  const ri = rpIn + <usize>(width - 1 - x);
  const ro = rpOut + <usize>(width - 1 - x);
  const cp = col + <usize>x * rowBytes;
  for (let b = 0; b < n8; b++) {
    const k = <usize>(b << 3);
    const di = i16x8.sub(li, v128.load8x8_u(ri + k));
    const dout = i16x8.sub(lo, v128.load8x8_u(ro + k));
    const o = cp + <usize>(b << 5);
    v128.store(o, i32x4.add(v128.load(o), i32x4.sub(errLo(di, ssd), errLo(dout, ssd))));
    v128.store(o + 16, i32x4.add(v128.load(o + 16), i32x4.sub(errHi(di, ssd), errHi(dout, ssd))));
  }
}

export function addRow32(col: usize, lRow: usize, rpRow: usize, width: i32, stride: i32, ssd: i32): void {
  if (ssd != 0) addRow32Impl(col, lRow, rpRow, width, stride, true);
  else addRow32Impl(col, lRow, rpRow, width, stride, false);
}


// ---------------------------------------------------------------------------
// One row of window sums + WTA, u16 lanes.
//   col    column sums (width * stride u16): of the previous row when adv = 1 (moved down
//          here with the entering row lIn/rpIn and the leaving row lOut/rpOut), else
//          already this row's (row 0, or the same clamped row entering and leaving)
//   acc    running horizontal sum (stride u16); tmp: its masked copy (stride u16)
//   br, bl right view: running best cost (u16) and level (u16) per index
//          q = width - 1 - x + l, i.e. right column xr = width - 1 - minD - q;
//          width + stride + 16 entries each, br set to MAX16 before the row
//   outL   width f32: left disparity (NaN = no candidate or not unique)
//   levels, minD  the (clipped) levels; r = window radius
//   subpix, uniq (0/1), factor = 1 + uniqueness% / 100, right (0/1); ssd is read by wtaRow32
// wtaRow16 and wtaRow32 repeat one loop on purpose: AssemblyScript's SIMD operations are
// typed per lane width (i16x8.* against i32x4.*) and it has no generics over them, so one
// function cannot serve both lane kinds without a branch per vector in the inner loop.
export function wtaRow16(
  col: usize,
  acc: usize,
  tmp: usize,
  br: usize,
  bl: usize,
  outL: usize,
  width: i32,
  levels: i32,
  stride: i32,
  r: i32,
  minD: i32,
  subpix: i32,
  uniq: i32,
  factor: f64,
  right: i32,
  adv: i32,
  lIn: usize,
  rpIn: usize,
  lOut: usize,
  rpOut: usize,
  ssd: i32,
): void {
  const nb = stride >> 3;
  const rowBytes = <usize>(stride << 1);
  const wm1 = width - 1;
  const vmax = i16x8.splat(<i16>MAX16);
  const iota = i16x8(0, 1, 2, 3, 4, 5, 6, 7);
  const eight = i16x8.splat(8);
  // acc = sum of col over clamp(-r .. r)
  for (let b = 0; b < nb; b++) v128.store(acc + <usize>(b << 4), i16x8.splat(0));
  // column sums of this row: columns 0..r now, column x + r at column x (fresh in cache)
  if (adv != 0) for (let x = 0; x <= r && x <= wm1; x++) advanceCol16(col, lIn, rpIn, lOut, rpOut, width, nb, rowBytes, x);
  for (let i = -r; i <= r; i++) {
    const c = col + <usize>clampI(i, 0, wm1) * rowBytes;
    for (let b = 0; b < nb; b++) {
      const o = <usize>(b << 4);
      v128.store(acc + o, i16x8.add(v128.load(acc + o), v128.load(c + o)));
    }
  }
  // lanes of the last block beyond `levels` (u16 0xffff there), built in tmp
  const last = nb - 1;
  v128.store(tmp + <usize>(last << 4), i16x8.splat(0));
  for (let l = levels; l < stride; l++) store<u16>(tmp + (<usize>l << 1), MAX16);
  const padMask = v128.load(tmp + <usize>(last << 4));
  for (let x = 0; x < width; x++) {
    if (adv != 0 && x > 0 && x + r <= wm1) advanceCol16(col, lIn, rpIn, lOut, rpOut, width, nb, rowBytes, x + r);
    const po = outL + (<usize>x << 2);
    // candidates: 0 <= x - (minD + l) <= width - 1, 0 <= l < levels
    let lo = x - wm1 - minD;
    if (lo < 0) lo = 0;
    let hi = x - minD;
    if (hi > levels - 1) hi = levels - 1;
    if (x > 0 && lo == 0 && hi == levels - 1 && uniq == 0) {
      // Interior column (every level a candidate): horizontal update, left minimum and
      // right view in one pass over the blocks, costs kept in acc.
      const ca = col + <usize>clampI(x + r, 0, wm1) * rowBytes;
      const cs = col + <usize>clampI(x - r - 1, 0, wm1) * rowBytes;
      const qb = <usize>((wm1 - x) << 1);
      // per lane: smallest cost and its first level (strict <, so earlier blocks win ties)
      let vmin = vmax;
      let vidx = vmax;
      let lvec = iota;
      for (let b = 0; b < nb; b++) {
        const o = <usize>(b << 4);
        let a = i16x8.add(v128.load(acc + o), i16x8.sub(v128.load(ca + o), v128.load(cs + o)));
        v128.store(acc + o, a);
        if (b == last) a = v128.or(a, padMask);
        vidx = v128.bitselect(lvec, vidx, i16x8.lt_u(a, vmin));
        vmin = i16x8.min_u(vmin, a);
        if (right != 0) {
          const pc = br + qb + o;
          const cur = v128.load(pc);
          const lt = i16x8.lt_u(a, cur);
          v128.store(pc, i16x8.min_u(a, cur));
          const pl = bl + qb + o;
          v128.store(pl, v128.bitselect(lvec, v128.load(pl), lt));
        }
        lvec = i16x8.add(lvec, eight);
      }
      const best = hmin16(vmin);
      // lowest level among the lanes holding the best cost
      const win = hmin16(v128.bitselect(vidx, vmax, i16x8.eq(vmin, i16x8.splat(<i16>best))));
      const cm = win > 0 ? <i32>load<u16>(acc + (<usize>(win - 1) << 1)) : MAX16;
      const cp = win < hi ? <i32>load<u16>(acc + (<usize>(win + 1) << 1)) : MAX16;
      store<f32>(po, finalDisparity(minD, win, cm, best, cp, cm != MAX16, cp != MAX16, subpix));
      continue;
    }
    if (x == 0) {
      for (let b = 0; b < nb; b++) {
        const o = <usize>(b << 4);
        v128.store(tmp + o, v128.load(acc + o));
      }
    } else {
      const ca = col + <usize>clampI(x + r, 0, wm1) * rowBytes;
      const cs = col + <usize>clampI(x - r - 1, 0, wm1) * rowBytes;
      for (let b = 0; b < nb; b++) {
        const o = <usize>(b << 4);
        const a = i16x8.add(v128.load(acc + o), i16x8.sub(v128.load(ca + o), v128.load(cs + o)));
        v128.store(acc + o, a);
        v128.store(tmp + o, a);
      }
    }
    if (hi < lo) {
      store<f32>(po, NaN);
      continue;
    }
    const b0 = lo >> 3;
    const b1 = hi >> 3;
    for (let l = b0 << 3; l < lo; l++) store<u16>(tmp + (<usize>l << 1), MAX16);
    for (let l = hi + 1, e = (b1 << 3) + 8; l < e; l++) store<u16>(tmp + (<usize>l << 1), MAX16);
    // right view: running minimum over the diagonal, strict < keeps the lowest level
    if (right != 0) {
      const qb = <usize>((wm1 - x) << 1);
      let lvec = i16x8.add(i16x8.splat(<i16>(b0 << 3)), iota);
      for (let b = b0; b <= b1; b++) {
        const o = <usize>(b << 4);
        const c = v128.load(tmp + o);
        const pc = br + qb + o;
        const cur = v128.load(pc);
        const lt = i16x8.lt_u(c, cur);
        v128.store(pc, i16x8.min_u(c, cur));
        const pl = bl + qb + o;
        v128.store(pl, v128.bitselect(lvec, v128.load(pl), lt));
        lvec = i16x8.add(lvec, eight);
      }
    }
    // left view
    let vmin = vmax;
    for (let b = b0; b <= b1; b++) vmin = i16x8.min_u(vmin, v128.load(tmp + <usize>(b << 4)));
    const best = hmin16(vmin);
    const bv = i16x8.splat(<i16>best);
    let win = lo;
    for (let b = b0; b <= b1; b++) {
      const m = i16x8.bitmask(i16x8.eq(v128.load(tmp + <usize>(b << 4)), bv));
      if (m != 0) {
        win = (b << 3) + ctz<i32>(m);
        break;
      }
    }
    // neighbours outside [lo, hi] are excluded candidates (lanes outside blocks b0..b1 are not masked)
    const cm = win > lo ? <i32>load<u16>(tmp + (<usize>(win - 1) << 1)) : MAX16;
    const cp = win < hi ? <i32>load<u16>(tmp + (<usize>(win + 1) << 1)) : MAX16;
    if (uniq != 0) {
      if (win > 0) store<u16>(tmp + (<usize>(win - 1) << 1), MAX16);
      store<u16>(tmp + (<usize>win << 1), MAX16);
      if (win + 1 < stride) store<u16>(tmp + (<usize>(win + 1) << 1), MAX16);
      let smin = vmax;
      for (let b = b0; b <= b1; b++) smin = i16x8.min_u(smin, v128.load(tmp + <usize>(b << 4)));
      const second = hmin16(smin);
      if (second != MAX16 && <f64>second <= <f64>best * factor) {
        store<f32>(po, NaN);
        continue;
      }
    }
    store<f32>(po, finalDisparity(minD, win, cm, best, cp, cm != MAX16, cp != MAX16, subpix));
  }
}

// Right-view disparities of the row from br/bl, then br reset to MAX16.
export function finishRight16(br: usize, bl: usize, outR: usize, width: i32, stride: i32, minD: i32): void {
  const n = width + stride - 1;
  for (let xr = 0; xr < width; xr++) {
    const q = width - 1 - minD - xr;
    let v: f32 = NaN;
    if (q >= 0 && q < n) {
      const c = <i32>load<u16>(br + (<usize>q << 1));
      if (c != MAX16) v = <f32>(minD + <i32>load<u16>(bl + (<usize>q << 1)));
    }
    store<f32>(outR + (<usize>xr << 2), v);
  }
  const vmax = i16x8.splat(<i16>MAX16);
  for (let q = 0; q < n + 8; q += 8) v128.store(br + (<usize>q << 1), vmax);
}

// ---------------------------------------------------------------------------
// The same with i32 lanes (4 levels per v128). br, bl: i32 entries.
export function wtaRow32(
  col: usize,
  acc: usize,
  tmp: usize,
  br: usize,
  bl: usize,
  outL: usize,
  width: i32,
  levels: i32,
  stride: i32,
  r: i32,
  minD: i32,
  subpix: i32,
  uniq: i32,
  factor: f64,
  right: i32,
  adv: i32,
  lIn: usize,
  rpIn: usize,
  lOut: usize,
  rpOut: usize,
  ssd: i32,
): void {
  // blocks of 4 levels that hold a level (stride is a multiple of 8, so one more block may follow)
  const nb = (levels + 3) >> 2;
  const rowBytes = <usize>(stride << 2);
  const wm1 = width - 1;
  const vmax = i32x4.splat(MAX32);
  const iota = i32x4(0, 1, 2, 3);
  const four = i32x4.splat(4);
  for (let b = 0; b < nb; b++) v128.store(acc + <usize>(b << 4), i32x4.splat(0));
  const n8 = stride >> 3;
  if (adv != 0) {
    for (let x = 0; x <= r && x <= wm1; x++) {
      if (ssd != 0) advanceCol32(col, lIn, rpIn, lOut, rpOut, width, n8, rowBytes, x, true);
      else advanceCol32(col, lIn, rpIn, lOut, rpOut, width, n8, rowBytes, x, false);
    }
  }
  for (let i = -r; i <= r; i++) {
    const c = col + <usize>clampI(i, 0, wm1) * rowBytes;
    for (let b = 0; b < nb; b++) {
      const o = <usize>(b << 4);
      v128.store(acc + o, i32x4.add(v128.load(acc + o), v128.load(c + o)));
    }
  }
  // lanes of the last block beyond `levels` (MAX32 there), built in tmp
  const last = nb - 1;
  v128.store(tmp + <usize>(last << 4), i32x4.splat(0));
  for (let l = levels, e = nb << 2; l < e; l++) store<i32>(tmp + (<usize>l << 2), MAX32);
  const padMask = v128.load(tmp + <usize>(last << 4));
  for (let x = 0; x < width; x++) {
    if (adv != 0 && x > 0 && x + r <= wm1) {
      if (ssd != 0) advanceCol32(col, lIn, rpIn, lOut, rpOut, width, n8, rowBytes, x + r, true);
      else advanceCol32(col, lIn, rpIn, lOut, rpOut, width, n8, rowBytes, x + r, false);
    }
    const po = outL + (<usize>x << 2);
    // candidates: 0 <= x - (minD + l) <= width - 1, 0 <= l < levels
    let lo = x - wm1 - minD;
    if (lo < 0) lo = 0;
    let hi = x - minD;
    if (hi > levels - 1) hi = levels - 1;
    if (x > 0 && lo == 0 && hi == levels - 1 && uniq == 0) {
      // Interior column (every level a candidate): horizontal update, left minimum and
      // right view in one pass over the blocks, costs kept in acc.
      const ca = col + <usize>clampI(x + r, 0, wm1) * rowBytes;
      const cs = col + <usize>clampI(x - r - 1, 0, wm1) * rowBytes;
      const qb = <usize>((wm1 - x) << 2);
      // per lane: smallest cost and its first level (strict <, so earlier blocks win ties)
      let vmin = vmax;
      let vidx = vmax;
      let lvec = iota;
      for (let b = 0; b < nb; b++) {
        const o = <usize>(b << 4);
        let a = i32x4.add(v128.load(acc + o), i32x4.sub(v128.load(ca + o), v128.load(cs + o)));
        v128.store(acc + o, a);
        if (b == last) a = v128.or(a, padMask);
        vidx = v128.bitselect(lvec, vidx, i32x4.lt_s(a, vmin));
        vmin = i32x4.min_s(vmin, a);
        if (right != 0) {
          const pc = br + qb + o;
          const cur = v128.load(pc);
          const lt = i32x4.lt_s(a, cur);
          v128.store(pc, i32x4.min_s(a, cur));
          const pl = bl + qb + o;
          v128.store(pl, v128.bitselect(lvec, v128.load(pl), lt));
        }
        lvec = i32x4.add(lvec, four);
      }
      const best = hmin32(vmin);
      // lowest level among the lanes holding the best cost
      const win = hmin32(v128.bitselect(vidx, vmax, i32x4.eq(vmin, i32x4.splat(best))));
      const cm = win > 0 ? <i32>load<i32>(acc + (<usize>(win - 1) << 2)) : MAX32;
      const cp = win < hi ? <i32>load<i32>(acc + (<usize>(win + 1) << 2)) : MAX32;
      store<f32>(po, finalDisparity(minD, win, cm, best, cp, cm != MAX32, cp != MAX32, subpix));
      continue;
    }
    if (x == 0) {
      for (let b = 0; b < nb; b++) {
        const o = <usize>(b << 4);
        v128.store(tmp + o, v128.load(acc + o));
      }
    } else {
      const ca = col + <usize>clampI(x + r, 0, wm1) * rowBytes;
      const cs = col + <usize>clampI(x - r - 1, 0, wm1) * rowBytes;
      for (let b = 0; b < nb; b++) {
        const o = <usize>(b << 4);
        const a = i32x4.add(v128.load(acc + o), i32x4.sub(v128.load(ca + o), v128.load(cs + o)));
        v128.store(acc + o, a);
        v128.store(tmp + o, a);
      }
    }
    if (hi < lo) {
      store<f32>(po, NaN);
      continue;
    }
    const b0 = lo >> 2;
    const b1 = hi >> 2;
    for (let l = b0 << 2; l < lo; l++) store<i32>(tmp + (<usize>l << 2), MAX32);
    for (let l = hi + 1, e = (b1 << 2) + 4; l < e; l++) store<i32>(tmp + (<usize>l << 2), MAX32);
    if (right != 0) {
      const qb = <usize>((wm1 - x) << 2);
      let lvec = i32x4.add(i32x4.splat(b0 << 2), iota);
      for (let b = b0; b <= b1; b++) {
        const o = <usize>(b << 4);
        const c = v128.load(tmp + o);
        const pc = br + qb + o;
        const cur = v128.load(pc);
        const lt = i32x4.lt_s(c, cur);
        v128.store(pc, i32x4.min_s(c, cur));
        const pl = bl + qb + o;
        v128.store(pl, v128.bitselect(lvec, v128.load(pl), lt));
        lvec = i32x4.add(lvec, four);
      }
    }
    let vmin = vmax;
    for (let b = b0; b <= b1; b++) vmin = i32x4.min_s(vmin, v128.load(tmp + <usize>(b << 4)));
    const best = hmin32(vmin);
    const bv = i32x4.splat(best);
    let win = lo;
    for (let b = b0; b <= b1; b++) {
      const m = i32x4.bitmask(i32x4.eq(v128.load(tmp + <usize>(b << 4)), bv));
      if (m != 0) {
        win = (b << 2) + ctz<i32>(m);
        break;
      }
    }
    const cm = win > lo ? load<i32>(tmp + (<usize>(win - 1) << 2)) : MAX32;
    const cp = win < hi ? load<i32>(tmp + (<usize>(win + 1) << 2)) : MAX32;
    if (uniq != 0) {
      if (win > 0) store<i32>(tmp + (<usize>(win - 1) << 2), MAX32);
      store<i32>(tmp + (<usize>win << 2), MAX32);
      if (win + 1 < stride) store<i32>(tmp + (<usize>(win + 1) << 2), MAX32);
      let smin = vmax;
      for (let b = b0; b <= b1; b++) smin = i32x4.min_s(smin, v128.load(tmp + <usize>(b << 4)));
      const second = hmin32(smin);
      if (second != MAX32 && <f64>second <= <f64>best * factor) {
        store<f32>(po, NaN);
        continue;
      }
    }
    store<f32>(po, finalDisparity(minD, win, cm, best, cp, cm != MAX32, cp != MAX32, subpix));
  }
}

export function finishRight32(br: usize, bl: usize, outR: usize, width: i32, stride: i32, minD: i32): void {
  const n = width + stride - 1;
  for (let xr = 0; xr < width; xr++) {
    const q = width - 1 - minD - xr;
    let v: f32 = NaN;
    if (q >= 0 && q < n) {
      const c = load<i32>(br + (<usize>q << 2));
      if (c != MAX32) v = <f32>(minD + load<i32>(bl + (<usize>q << 2)));
    }
    store<f32>(outR + (<usize>xr << 2), v);
  }
  const vmax = i32x4.splat(MAX32);
  for (let q = 0; q < n + 8; q += 4) v128.store(br + (<usize>q << 2), vmax);
}
