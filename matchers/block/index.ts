/**
 * Built-in matcher `block`: block matching with a SAD, SSD or ZNCC cost over a square
 * window (running box sums, O(1) per pixel per disparity), winner-take-all, and the
 * shared post-processing stages (kernels/postprocess.ts).
 * Candidates whose match x - d falls outside the right image are excluded.
 */
import type { MatcherPlugin, MatchInput, ParamValues } from '../../src/plugins/contract.js';
import { POSTPROCESS_PARAMS, readPostprocess } from '../kernels/postprocess.js';
import { checkInputSizes, disparityLevels } from '../kernels/range.js';
import { copyRows, matchBySlices, type SliceFn, type StripSource } from '../kernels/slices.js';
import { BLOCK_COSTS, blockCostSlice, createBlockScratch, type BlockCostKind } from './cost.js';

export interface BlockOptions {
  cost: BlockCostKind;
  /** Window side, odd. */
  window: number;
}

export function readBlockOptions(params: ParamValues): BlockOptions {
  const cost = params.cost;
  const window = params.window;
  return {
    cost: typeof cost === 'string' && (BLOCK_COSTS as readonly string[]).includes(cost) ? (cost as BlockCostKind) : 'sad',
    window: typeof window === 'number' ? window : 9,
  };
}

/** The block matcher as a plain function (the plugin's match); stripRows is for tests (see kernels/slices.ts). */
export function blockMatch(
  input: MatchInput,
  params: ParamValues,
  signal?: AbortSignal,
  stripRows?: number,
): Float32Array {
  const { width, height, left, right } = input;
  checkInputSizes(width, height, left, right);
  const { minDisparity, levels } = disparityLevels(input.minDisparity, input.maxDisparity);
  const opts = readBlockOptions(params);
  const post = readPostprocess(params);
  const radius = (opts.window - 1) >> 1;
  return matchBySlices(width, height, minDisparity, levels, post, signal, blockSource(opts.cost, radius, input), stripRows);
}

/** Strip source for matchBySlices: strip images and scratch buffers, then one cost slice per call. */
function blockSource(kind: BlockCostKind, radius: number, input: MatchInput): StripSource {
  return {
    halo: radius,
    strip(rows: Int32Array): SliceFn {
      const sl = copyRows(input.left, input.width, rows);
      const sr = copyRows(input.right, input.width, rows);
      const scratch = createBlockScratch(kind, sl, sr, input.width, rows.length, radius);
      return (d, out) => blockCostSlice(scratch, sl, sr, d, out);
    },
  };
}

export const blockMatcher: MatcherPlugin = {
  id: 'block',
  summary: 'block matching: SAD, SSD or ZNCC over a square window, winner-take-all',
  version: '1.0.0',
  params: [
    {
      name: 'cost',
      type: 'enum',
      default: 'sad',
      values: BLOCK_COSTS,
      description: 'window cost: sad (absolute differences), ssd (squared differences), zncc (1 - zero-mean normalised correlation)',
    },
    { name: 'window', type: 'int', default: 9, min: 1, max: 51, odd: true, description: 'window side, px (odd)' },
    ...POSTPROCESS_PARAMS,
  ],
  match(input, params, signal) {
    return blockMatch(input, params, signal);
  },
};
