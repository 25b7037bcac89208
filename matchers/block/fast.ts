/**
 * The WebAssembly SIMD path of the block matcher (SAD and SSD): the kernel in
 * ./assembly/block.ts, compiled by scripts/build-wasm.sh into build/wasm/block.wasm.
 *
 * Scheme (the classic incremental one): per image row, column sums over the window
 * height for every (x, level) are updated by adding the entering row's differences
 * and subtracting the leaving row's; a running sum over the window width per level
 * gives the window cost; WTA over 8 (u16 lanes) or 4 (i32 lanes) levels per vector;
 * the right view's disparity is a running minimum over the same costs. No cost volume
 * or cost slice is held: one row of column sums (width * levels lanes) besides the
 * rounded images and the output maps. Lane types and the overflow proof are in the
 * kernel's header. Threads: one (MatchInput.threads is not used; the runner's pool
 * already matches pairs in parallel, and splitting rows too would oversubscribe).
 *
 * Measured (1280x720, 128 levels, SAD 9x9, lr and subpix on, shared 2-core machine,
 * load average 7-8): 145-200 ms wall, ~90-110 ms CPU, against ~2.3 s CPU for the
 * TypeScript kernel; OpenCV StereoBM 64-119 ms in the same runs (bench/matchers.ts).
 *
 * Luminance: both paths (this one and the TypeScript reference) compare luminance
 * rounded to whole levels 0..255 (roundLuminance in ./cost.ts), so they give the same
 * map bit for bit; test/matchers/block-wasm.test.ts checks this on random images.
 *
 *   blockWasmModule(): WasmModuleSync | null   the compiled module (sync; cached per thread), null when
 *     not built or out of date (an export the driver calls is missing)
 *   blockWasmMaps(args: FastBlockArgs, signal?): { left: Float32Array; right: Float32Array | null } | null
 *     Left-view disparity (WTA, uniqueness, subpixel) and, when args.rightView, the right
 *     view's integer disparity; no post-processing. null when the module is missing or
 *     the job does not suit the kernel (no level has a candidate, window side > 51,
 *     or the buffers would exceed WASM_BLOCK_MAX_BYTES or cannot be allocated): the
 *     caller then runs the TypeScript path.
 *
 * The module is compiled and instantiated synchronously (allowed in Node for any
 * size) so that blockMatch stays a plain synchronous function. Each call gets a fresh
 * memory sized to the job, released when the call returns.
 */
import { existsSync, readFileSync } from 'node:fs';
import { AbortedError } from '../../src/core/errors.js';
import { wasmPath } from '../sgm/wasm.js';
import { roundLevel } from './cost.js';

/* The project's tsconfig has no DOM lib and @types/node does not declare WebAssembly. */
export interface WasmModuleSync {
  readonly __blockWasmModule: true;
}
interface WasmMemorySync {
  readonly buffer: ArrayBuffer;
}
interface WasmSyncApi {
  Module: {
    new (bytes: Uint8Array): WasmModuleSync;
    exports(mod: WasmModuleSync): { name: string; kind: string }[];
  };
  Instance: new (mod: WasmModuleSync, imports: object) => { exports: Record<string, unknown> };
  Memory: new (d: { initial: number; maximum?: number }) => WasmMemorySync;
}
const WA = (globalThis as unknown as { WebAssembly: WasmSyncApi }).WebAssembly;

type AddRowFn = (col: number, lRow: number, rpRow: number, width: number, stride: number, ssd: number) => void;
type WtaRowFn = (
  col: number,
  acc: number,
  tmp: number,
  br: number,
  bl: number,
  outL: number,
  width: number,
  levels: number,
  stride: number,
  r: number,
  minD: number,
  subpix: number,
  uniq: number,
  factor: number,
  right: number,
  adv: number,
  lIn: number,
  rpIn: number,
  lOut: number,
  rpOut: number,
  ssd: number,
) => void;
type FinishRightFn = (br: number, bl: number, outR: number, width: number, stride: number, minD: number) => void;

interface BlockExports {
  addRow16: AddRowFn;
  addRow32: AddRowFn;
  wtaRow16: WtaRowFn;
  wtaRow32: WtaRowFn;
  finishRight16: FinishRightFn;
  finishRight32: FinishRightFn;
}

/** Largest memory one block job may ask for (bytes). */
export const WASM_BLOCK_MAX_BYTES = 1024 * 1024 * 1024;
/** Largest window side the kernel's lane types are proved for (the parameter schema's max). */
export const WASM_BLOCK_MAX_SIDE = 51;
/** Largest SAD window side that keeps window sums in u16 lanes (15^2 * 255 = 57375 < 65535). */
export const WASM_BLOCK_U16_SIDE = 15;

let moduleCache: WasmModuleSync | null | undefined;

/** Exports this driver calls; a build/wasm/block.wasm without them (out of date) counts as missing. */
const KERNEL_EXPORTS = ['addRow16', 'addRow32', 'wtaRow16', 'wtaRow32', 'finishRight16', 'finishRight32'];

/** The compiled kernel, or null when build/wasm/block.wasm is missing or out of date. */
export function blockWasmModule(): WasmModuleSync | null {
  if (moduleCache !== undefined) return moduleCache;
  const path = wasmPath('block');
  moduleCache = null;
  if (path && existsSync(path)) {
    const mod = new WA.Module(readFileSync(path));
    const names = new Set(WA.Module.exports(mod).map((e) => e.name));
    if (KERNEL_EXPORTS.every((n) => names.has(n))) moduleCache = mod;
  }
  return moduleCache;
}

export interface FastBlockArgs {
  width: number;
  height: number;
  /** Luminance (0-255 scale), row-major; rounded here with roundLevel (./cost.ts). */
  left: Float32Array;
  right: Float32Array;
  /** First integer level and number of levels (kernels/range.ts). */
  minDisparity: number;
  levels: number;
  cost: 'sad' | 'ssd';
  /** Window radius: side = 2 * radius + 1. */
  radius: number;
  subpix: boolean;
  /** Uniqueness margin in %, 0 = off. */
  uniq: number;
  /** Also compute the right view (for the left-right check). */
  rightView: boolean;
}

const align16 = (v: number): number => (v + 15) & ~15;

/** Byte offsets of the kernel's buffers for one job; see the kernel's header. */
interface Layout {
  wide: boolean;
  minD: number;
  levels: number;
  stride: number;
  pw: number;
  lq: number;
  rp: number;
  col: number;
  acc: number;
  tmp: number;
  br: number;
  bl: number;
  outL: number;
  outR: number;
  bytes: number;
}

function layoutFor(a: FastBlockArgs): Layout | null {
  const { width, height } = a;
  // Only levels with a candidate somewhere (|d| < width); the others change nothing
  // (see kernels/slices.ts and wta.ts: their slices are ignored).
  const minD = Math.max(a.minDisparity, -(width - 1));
  const maxD = Math.min(a.minDisparity + a.levels - 1, width - 1);
  if (minD > maxD) return null;
  const side = 2 * a.radius + 1;
  if (side > WASM_BLOCK_MAX_SIDE) return null;
  const levels = maxD - minD + 1;
  const stride = (levels + 7) & ~7;
  // u16 lanes hold level indices too: stride <= 65536 (always true with width <= 32768).
  const wide = a.cost === 'ssd' || side > WASM_BLOCK_U16_SIDE || stride > 65536;
  const lane = wide ? 4 : 2;
  const n = width * height;
  const pw = align16(width + stride + 16);
  const brLen = width + stride + 16;
  let at = 65536; // the first 64 KiB are left to the module (the sgm kernel's convention)
  const take = (bytes: number): number => {
    const o = at;
    at = align16(at + bytes);
    return o;
  };
  const lq = take(n);
  const rp = take(height * pw);
  const col = take(width * stride * lane);
  const acc = take(stride * lane);
  const tmp = take(stride * lane);
  const br = take(brLen * lane);
  const bl = take(brLen * lane);
  const outL = take(n * 4);
  const outR = take(a.rightView ? n * 4 : 0);
  if (at > WASM_BLOCK_MAX_BYTES) return null;
  return { wide, minD, levels, stride, pw, lq, rp, col, acc, tmp, br, bl, outL, outR, bytes: at };
}

/** Left (and right) disparity maps from the wasm kernel, or null; see the file header. */
export function blockWasmMaps(
  a: FastBlockArgs,
  signal?: AbortSignal,
): { left: Float32Array; right: Float32Array | null } | null {
  const mod = blockWasmModule();
  if (!mod) return null;
  const L = layoutFor(a);
  if (!L) return null;
  const { width, height } = a;
  let memory: WasmMemorySync;
  try {
    memory = new WA.Memory({ initial: Math.ceil(L.bytes / 65536) });
  } catch {
    return null; // could not allocate: the TypeScript kernel works in bounded strips
  }
  const k = new WA.Instance(mod, { env: { memory } }).exports as unknown as BlockExports;
  const buf = memory.buffer;
  fillRounded(new Uint8Array(buf, L.lq, width * height), a.left);
  fillRightReversed(new Uint8Array(buf, L.rp, height * L.pw), a.right, width, height, L.pw, L.minD);
  const brLen = width + L.stride + 16;
  if (L.wide) new Int32Array(buf, L.br, brLen).fill(0x7fffffff);
  else new Uint16Array(buf, L.br, brLen).fill(0xffff);
  const addRow = L.wide ? k.addRow32 : k.addRow16;
  const wtaRow = L.wide ? k.wtaRow32 : k.wtaRow16;
  const finishRight = L.wide ? k.finishRight32 : k.finishRight16;
  const ssd = a.cost === 'ssd' ? 1 : 0;
  const r = a.radius;
  const ymax = height - 1;
  const clampY = (y: number): number => (y < 0 ? 0 : y > ymax ? ymax : y);
  // Column sums of row 0: rows clamp(-r .. r) (replicate rule), memory starts zeroed.
  for (let j = -r; j <= r; j++) {
    const yy = clampY(j);
    addRow(L.col, L.lq + yy * width, L.rp + yy * L.pw, width, L.stride, ssd);
  }
  const factor = 1 + a.uniq / 100;
  for (let y = 0; y < height; y++) {
    if (signal?.aborted) throw new AbortedError();
    // Column sums move down one row (entering row y + r, leaving row y - 1 - r, clamped);
    // wtaRow does this column by column, just before the column is summed.
    const yin = clampY(y + r);
    const yout = clampY(y - 1 - r);
    const adv = y > 0 && yin !== yout ? 1 : 0;
    wtaRow(
      L.col,
      L.acc,
      L.tmp,
      L.br,
      L.bl,
      L.outL + y * width * 4,
      width,
      L.levels,
      L.stride,
      r,
      L.minD,
      a.subpix ? 1 : 0,
      a.uniq > 0 ? 1 : 0,
      factor,
      a.rightView ? 1 : 0,
      adv,
      L.lq + yin * width,
      L.rp + yin * L.pw,
      L.lq + yout * width,
      L.rp + yout * L.pw,
      ssd,
    );
    if (a.rightView) finishRight(L.br, L.bl, L.outR + y * width * 4, width, L.stride, L.minD);
  }
  const n = width * height;
  const left = new Float32Array(buf, L.outL, n).slice();
  const right = a.rightView ? new Float32Array(buf, L.outR, n).slice() : null;
  return { left, right };
}

/** Luminance rounded to whole levels (roundLevel) into bytes. */
function fillRounded(dst: Uint8Array, src: Float32Array): void {
  for (let i = 0; i < src.length; i++) dst[i] = roundLevel(src[i]);
}

/**
 * The right image (rounded) as reversed, padded rows: row y, byte idx holds
 * R(clamp(width - 1 - minD - idx), y), so the levels of one left column are consecutive
 * bytes. Three runs per row keep the clamp out of the loop: idx < i0 reads column
 * width - 1, [i0, i1) the reversed row, idx >= i1 column 0.
 */
function fillRightReversed(
  dst: Uint8Array,
  src: Float32Array,
  width: number,
  height: number,
  pw: number,
  minD: number,
): void {
  const xmax = width - 1;
  // xr = xmax - minD - idx is > xmax for idx < -minD and < 0 for idx > xmax - minD
  const i0 = Math.min(pw, Math.max(0, -minD));
  const i1 = Math.min(pw, Math.max(i0, xmax - minD + 1));
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const o = y * pw;
    const last = roundLevel(src[row + xmax]);
    const first = roundLevel(src[row]);
    for (let idx = 0; idx < i0; idx++) dst[o + idx] = last;
    for (let idx = i0; idx < i1; idx++) dst[o + idx] = roundLevel(src[row + xmax - minD - idx]);
    for (let idx = i1; idx < pw; idx++) dst[o + idx] = first;
  }
}
