/**
 * The SGM aggregation driver: one arena (see matchers/kernels/sgm.ts for the
 * layout), a forward pass over rows top to bottom and a backward pass bottom to
 * top, one kernel call per row, `signal` checked between rows.
 *
 * Kernels: 'wasm' (AssemblyScript SIMD, build/wasm/sgm.wasm) or 'ts' (the scalar
 * reference). 'auto' takes wasm when the file is there and falls back to TypeScript
 * with a one-time warning otherwise.
 */
import { AbortedError, MatcherFailure } from '../../src/core/errors.js';
import { pathRowTs, sgmLayout, type SgmLayout } from '../kernels/sgm.js';
import { leaseKernel, loadWasmModule, wasmPath, WASM_MAX_BYTES } from './wasm.js';

export type KernelChoice = 'auto' | 'ts' | 'wasm';

/**
 * A row kernel over one arena: pathRowTs's arguments without the two arena views
 * (the WebAssembly export `pathRow` takes exactly these byte offsets and numbers).
 */
type PathRowFn = typeof pathRowTs extends (u16: Uint16Array, u8: Uint8Array, ...rest: infer A) => void
  ? (...args: A) => void
  : never;

/** The other exports of the WebAssembly module (see matchers/sgm/assembly/sgm.ts). */
export interface SgmWasmStages {
  censusRow(img: number, bits: number, width: number, height: number, y: number, winW: number, winH: number, words: number): void;
  censusCostRow(
    bitsL: number,
    bitsR: number,
    costRow: number,
    width: number,
    y: number,
    levels: number,
    stride: number,
    minD: number,
    words: number,
    outside: number,
  ): void;
  wtaRow(sumRow: number, out: number, width: number, levels: number, stride: number, minD: number, subpix: number, uniq: number): void;
  wtaRightRow(
    sumRow: number,
    out: number,
    width: number,
    levels: number,
    stride: number,
    minD: number,
    subpix: number,
    scratch: number,
  ): void;
}

export interface SgmArena {
  readonly layout: SgmLayout;
  /** The kernel actually used. */
  readonly kernel: 'ts' | 'wasm';
  readonly buffer: ArrayBuffer;
  /** Views over the whole arena. */
  readonly u8: Uint8Array;
  readonly u16: Uint16Array;
  /** Views of the cost volume, the sum volume and the gray image (stride = layout.stride). */
  readonly cost: Uint16Array;
  readonly sum: Uint16Array;
  readonly gray: Uint8Array;
  readonly pathRow: PathRowFn;
  /** The wasm module's other stages, when kernel = 'wasm'. */
  readonly stages: SgmWasmStages | null;
  /** Hands a pooled wasm memory back (see wasm.ts leaseKernel); views become invalid. */
  readonly release: () => void;
}

export interface SgmAggregateOptions {
  p1: number;
  p2: number;
  /** P2 edge adaptation constant k (0 = constant P2); see matchers/kernels/sgm.ts. */
  edgeK: number;
  paths: 4 | 8;
}

let warned = false;

function gib(bytes: number): string {
  return (bytes / 2 ** 30).toFixed(1);
}

function warnOnce(msg: string): void {
  if (warned) return;
  warned = true;
  process.emitWarning(msg, { code: 'PARALLAX_SGM_WASM' });
}

/**
 * Creates the arena with the chosen kernel. `wasmName` names build/wasm/<name>.wasm.
 * A wasm arena may reuse a pooled memory (not zeroed: every stage writes what it reads);
 * call release() when done. A TypeScript arena is a fresh zeroed ArrayBuffer.
 */
export async function createArena(
  width: number,
  height: number,
  levels: number,
  choice: KernelChoice,
  words = 2,
  wasmName = 'sgm',
): Promise<SgmArena> {
  const layout = sgmLayout(width, height, levels, words);
  let kernel: 'ts' | 'wasm' = 'ts';
  let buffer: ArrayBuffer | null = null;
  let wasmFn: PathRowFn | null = null;
  let stages: SgmWasmStages | null = null;
  let release = (): void => {};
  if (choice !== 'ts') {
    const mod = await loadWasmModule(wasmName);
    if (!mod) {
      if (choice === 'wasm') throw new MatcherFailure(`sgm: the wasm kernel ${wasmPath(wasmName)} is missing; run npm run build:wasm`);
      warnOnce(`sgm: ${wasmPath(wasmName)} not found (run npm run build:wasm); using the slower TypeScript kernel`);
    } else if (layout.bytes > WASM_MAX_BYTES) {
      if (choice === 'wasm') throw new MatcherFailure(`sgm: ${width}x${height} with ${levels} levels needs ${gib(layout.bytes)} GiB, beyond the 4 GiB of a wasm32 memory`);
    } else {
      const inst = await leaseKernel(wasmName, mod, layout.bytes);
      release = inst.release;
      buffer = inst.memory.buffer;
      wasmFn = inst.exports.pathRow as PathRowFn;
      stages = inst.exports as unknown as SgmWasmStages;
      kernel = 'wasm';
    }
  }
  if (!buffer) {
    try {
      buffer = new ArrayBuffer(layout.bytes);
    } catch {
      throw new MatcherFailure(`sgm: ${width}x${height} with ${levels} levels needs ${gib(layout.bytes)} GiB of memory, which could not be allocated`);
    }
  }
  const u8 = new Uint8Array(buffer);
  const u16 = new Uint16Array(buffer);
  const vol = layout.width * layout.height * layout.stride;
  const cost = new Uint16Array(buffer, layout.cost, vol);
  const sum = new Uint16Array(buffer, layout.sum, vol);
  const gray = new Uint8Array(buffer, layout.gray, width * height);
  const pathRow: PathRowFn =
    wasmFn ??
    ((c, s, g, gp, w, l, st, step, pr, cr, pm, cm, hp, dm, p1, p2, k, acc) =>
      pathRowTs(u16, u8, c, s, g, gp, w, l, st, step, pr, cr, pm, cm, hp, dm, p1, p2, k, acc));
  return { layout, kernel, buffer, u8, u16, cost, sum, gray, pathRow, stages, release };
}

function checkAbort(signal: AbortSignal | undefined): void {
  if (signal?.aborted) throw new AbortedError();
}

/**
 * S = sum over the chosen paths of L_r, into arena.sum, from arena.cost and arena.gray.
 * Forward pass: directions from the left, top-left, top, top-right (top-left-ish);
 * backward pass: their mirrors.
 */
export function aggregatePaths(arena: SgmArena, opts: SgmAggregateOptions, signal?: AbortSignal): void {
  const L = arena.layout;
  const { width, height, levels, stride } = L;
  const rowVol = width * stride * 2; // bytes of one image row of the volume
  const dirMask = opts.paths === 8 ? 0b1111 : 0b0101;
  const fn = arena.pathRow;
  for (let pass = 0; pass < 2; pass++) {
    const step = pass === 0 ? 1 : -1;
    let cur = 0;
    for (let i = 0; i < height; i++) {
      checkAbort(signal);
      const y = step > 0 ? i : height - 1 - i;
      const yPrev = y - step;
      fn(
        L.cost + y * rowVol,
        L.sum + y * rowVol,
        L.gray + y * width,
        L.gray + (i > 0 ? yPrev : y) * width,
        width,
        levels,
        stride,
        step,
        L.rows[1 - cur],
        L.rows[cur],
        L.mins[1 - cur],
        L.mins[cur],
        i > 0 ? 1 : 0,
        dirMask,
        opts.p1,
        opts.p2,
        opts.edgeK,
        pass,
      );
      cur = 1 - cur;
    }
  }
}
