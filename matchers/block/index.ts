/**
 * Built-in matcher `block`: block matching with a SAD, SSD or ZNCC cost over a square
 * window, winner-take-all, and the shared post-processing stages (kernels/postprocess.ts).
 * Candidates whose match x - d falls outside the right image are excluded.
 *
 * Kernels (`kernel` parameter, SAD and SSD only):
 *   wasm  WebAssembly SIMD, incremental column and row sums (./fast.ts, ./assembly/block.ts)
 *   ts    the TypeScript reference: one cost slice per disparity with running box sums
 *         (./cost.ts, kernels/slices.ts), O(1) per pixel per disparity
 *   auto  wasm when build/wasm/block.wasm is there, else ts with a one-time warning.
 * Both compare luminance rounded to whole levels 0..255 (roundLuminance) and give the
 * same map bit for bit. ZNCC always runs the TypeScript kernel on float luminance.
 */
import { MatcherFailure } from '../../src/core/errors.js';
import type { MatcherPlugin, MatchInput, ParamValues } from '../../src/core/matcher.js';
import { applyPostprocess, matchWithConfidence, POSTPROCESS_PARAMS, readPostprocess } from '../kernels/postprocess.js';
import { matchLevels } from '../kernels/range.js';
import { copyRows, matchBySlices, type SliceFn, type SliceRun, type StripSource } from '../kernels/slices.js';
import { wasmPath } from '../sgm/wasm.js';
import { BLOCK_COSTS, blockCostSlice, createBlockScratch, roundLuminance, type BlockCostKind } from './cost.js';
import { blockWasmMaps, blockWasmModule } from './fast.js';

export type BlockKernel = 'auto' | 'ts' | 'wasm';
export const BLOCK_KERNELS: readonly BlockKernel[] = ['auto', 'wasm', 'ts'];

export interface BlockOptions {
  cost: BlockCostKind;
  /** Window side, odd. */
  window: number;
  kernel: BlockKernel;
}

export function readBlockOptions(params: ParamValues): BlockOptions {
  const cost = params.cost;
  const window = params.window;
  const kernel = params.kernel;
  return {
    cost: typeof cost === 'string' && (BLOCK_COSTS as readonly string[]).includes(cost) ? (cost as BlockCostKind) : 'sad',
    window: typeof window === 'number' ? window : 9,
    kernel:
      typeof kernel === 'string' && (BLOCK_KERNELS as readonly string[]).includes(kernel) ? (kernel as BlockKernel) : 'auto',
  };
}

/** The kernel the last blockMatch in this thread ran (tests and the benchmark read it). */
export const blockLastRun: { kernel: 'ts' | 'wasm' } = { kernel: 'ts' };

let warned = false;
function warnOnce(msg: string): void {
  if (warned) return;
  warned = true;
  process.emitWarning(msg, { code: 'PARALLAX_BLOCK_WASM' });
}

/** The block matcher as a plain function (the plugin's match); run.stripRows is for tests (see kernels/slices.ts). */
export function blockMatch(input: MatchInput, params: ParamValues, signal?: AbortSignal, run: SliceRun = {}): Float32Array {
  const { stripRows, sink } = run;
  const { width, height } = input;
  const { minDisparity, levels } = matchLevels(input);
  const opts = readBlockOptions(params);
  const post = readPostprocess(params);
  const radius = (opts.window - 1) >> 1;
  let left = input.left;
  let right = input.right;
  if (opts.cost !== 'zncc') {
    if (opts.kernel !== 'ts') {
      if (!blockWasmModule()) {
        const msg = `block: the wasm kernel ${wasmPath('block')} is missing or out of date; run npm run build:wasm`;
        if (opts.kernel === 'wasm') throw new MatcherFailure(msg);
        warnOnce(`${msg} (using the slower TypeScript kernel)`);
      } else {
        const maps = blockWasmMaps(
          {
            width,
            height,
            left,
            right,
            minDisparity,
            levels,
            cost: opts.cost,
            radius,
            subpix: post.subpix,
            uniq: post.uniq,
            rightView: post.lr > 0,
          },
          signal,
        );
        // null: a job the kernel does not take (no candidate at all, huge buffers); same result from ts
        if (maps) {
          blockLastRun.kernel = 'wasm';
          applyPostprocess(maps.left, maps.right, width, height, post, sink);
          return maps.left;
        }
      }
    }
    left = roundLuminance(left);
    right = roundLuminance(right);
  }
  blockLastRun.kernel = 'ts';
  return matchBySlices(
    width,
    height,
    minDisparity,
    levels,
    post,
    signal,
    blockSource(opts.cost, radius, width, left, right),
    stripRows,
    sink,
  );
}

/** Strip source for matchBySlices: strip images and scratch buffers, then one cost slice per call. */
function blockSource(
  kind: BlockCostKind,
  radius: number,
  width: number,
  left: Float32Array,
  right: Float32Array,
): StripSource {
  return {
    halo: radius,
    strip(rows: Int32Array): SliceFn {
      const sl = copyRows(left, width, rows);
      const sr = copyRows(right, width, rows);
      const scratch = createBlockScratch(kind, sl, sr, width, rows.length, radius);
      return (d, out) => blockCostSlice(scratch, sl, sr, d, out);
    },
  };
}

export const blockMatcher: MatcherPlugin = {
  id: 'block',
  summary: 'block matching: SAD, SSD or ZNCC over a square window (WebAssembly SIMD for SAD/SSD), winner-take-all',
  // 1.1.0: SAD/SSD compare luminance rounded to whole levels (wasm kernel; same map from ts)
  version: '1.1.0',
  params: [
    {
      name: 'cost',
      type: 'enum',
      default: 'sad',
      values: BLOCK_COSTS,
      description: 'window cost: sad (absolute differences), ssd (squared differences), zncc (1 - zero-mean normalised correlation)',
    },
    { name: 'window', type: 'int', default: 9, min: 1, max: 51, odd: true, description: 'window side, px (odd)' },
    {
      name: 'kernel',
      type: 'enum',
      default: 'auto',
      values: BLOCK_KERNELS,
      description: 'sad/ssd kernel: WebAssembly SIMD, TypeScript, or wasm when built (same result; zncc always TypeScript)',
    },
    ...POSTPROCESS_PARAMS,
  ],
  match(input, params, signal) {
    return matchWithConfidence((sink) => blockMatch(input, params, signal, { sink }));
  },
};
