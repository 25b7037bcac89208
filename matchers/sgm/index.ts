/**
 * Built-in matcher `sgm`: semi-global matching (Hirschmüller 2005/2008).
 *
 * Stages: pixel cost (census Hamming distance, or Birchfield–Tomasi on luminance)
 * into a uint16 volume; path aggregation over 4 or 8 directions (row by row, see
 * matchers/kernels/sgm.ts and ./aggregate.ts; WebAssembly SIMD kernel or the
 * TypeScript one); winner-take-all on S with the uniqueness test; the shared
 * post-processing (left-right check against the right-view disparity taken from S,
 * subpixel parabola, speckle removal, hole filling).
 *
 * Candidates whose match x - d is outside the right image take the largest pixel
 * cost during aggregation and are excluded from the WTA.
 */
import { AbortedError, UsageError } from '../../src/core/errors.js';
import { withDefaults, type MatcherPlugin, type MatchInput, type ParamSpec, type ParamValues } from '../../src/core/matcher.js';
import { btExtremes, btPair } from '../kernels/bt.js';
import { censusTransform, censusWords } from '../kernels/census.js';
import { applyPostprocess, matchWithConfidence, postprocessParamsWith, readPostprocess, type ConfidenceSink, type PostprocessOptions } from '../kernels/postprocess.js';
import { matchLevels } from '../kernels/range.js';
import { SGM_MAX_COST, SGM_MAX_P2 } from '../kernels/sgm.js';
import { EXCLUDED_U16 } from '../kernels/wta.js';
import { aggregatePaths, createArena, type KernelChoice, type SgmArena } from './aggregate.js';
import { dropKernelPool } from './wasm.js';
import { finishVolume } from '../kernels/finish.js';

export interface SgmOptions {
  p1: number;
  p2: number;
  /** P2 edge adaptation constant k (0 = constant P2). */
  p2edge: number;
  paths: 4 | 8;
  cost: 'census' | 'bt';
  censusW: number;
  censusH: number;
  kernel: KernelChoice;
}

/** Shared post-processing block with the defaults that suit SGM. */
const SGM_POST_DEFAULTS: Record<string, number | boolean> = { uniq: 5, speckle: 50, speckleDiff: 1, fill: true };

export const SGM_PARAMS: readonly ParamSpec[] = [
  { name: 'p1', type: 'int', default: 8, min: 0, max: SGM_MAX_P2, description: 'penalty for a 1-level change along a path' },
  {
    name: 'p2',
    type: 'int',
    default: 96,
    min: 0,
    max: SGM_MAX_P2,
    description: 'penalty for a larger change along a path (>= p1)',
  },
  {
    name: 'p2edge',
    type: 'int',
    default: 16,
    min: 0,
    max: 255,
    description: 'lower p2 across intensity edges: p2 * k / (k + |dI|), never below p1 (0 = constant p2)',
  },
  { name: 'paths', type: 'enum', default: '8', values: ['8', '4'], description: 'aggregation directions' },
  { name: 'cost', type: 'enum', default: 'census', values: ['census', 'bt'], description: 'pixel cost' },
  { name: 'censusW', type: 'int', default: 9, min: 3, max: 15, odd: true, description: 'census window width, px (odd)' },
  { name: 'censusH', type: 'int', default: 7, min: 1, max: 15, odd: true, description: 'census window height, px (odd)' },
  {
    name: 'kernel',
    type: 'enum',
    default: 'auto',
    values: ['auto', 'wasm', 'ts'],
    description: 'path kernel: WebAssembly SIMD, TypeScript, or wasm when built',
  },
  ...postprocessParamsWith(SGM_POST_DEFAULTS),
];

export function readSgmOptions(params: ParamValues): SgmOptions {
  const n = (k: string, d: number): number => {
    const v = params[k];
    return typeof v === 'number' ? v : d;
  };
  const s = (k: string, d: string): string => {
    const v = params[k];
    return v === undefined ? d : String(v);
  };
  const opts: SgmOptions = {
    p1: n('p1', 8),
    p2: n('p2', 96),
    p2edge: n('p2edge', 16),
    paths: s('paths', '8') === '4' ? 4 : 8,
    cost: s('cost', 'census') === 'bt' ? 'bt' : 'census',
    censusW: n('censusW', 9),
    censusH: n('censusH', 7),
    kernel: s('kernel', 'auto') as KernelChoice,
  };
  if (opts.p1 > opts.p2) throw new UsageError('--matcher', `sgm: p1=${opts.p1} must not exceed p2=${opts.p2}`);
  if (opts.p2 > SGM_MAX_P2) throw new UsageError('--matcher', `sgm: p2=${opts.p2} exceeds ${SGM_MAX_P2}`);
  return opts;
}

/** Rounded, clamped 8-bit luminance for the P2 edge test. */
function fillGray(src: Float32Array, dst: Uint8Array): void {
  for (let i = 0; i < src.length; i++) {
    const v = Math.round(src[i]);
    dst[i] = v < 0 ? 0 : v > 255 ? 255 : v;
  }
}

/** Census Hamming costs into the arena's cost volume; excluded candidates get the window's bit count. */
function fillCensusCost(arena: SgmArena, input: MatchInput, minD: number, o: SgmOptions, signal?: AbortSignal): void {
  const { width, height, levels, stride } = arena.layout;
  const cl = censusTransform(input.left, width, height, o.censusW, o.censusH);
  const cr = censusTransform(input.right, width, height, o.censusW, o.censusH);
  const words = cl.words;
  const bl = cl.bits;
  const br = cr.bits;
  const cost = arena.cost;
  const bitsInWindow = o.censusW * o.censusH - 1;
  const outside = bitsInWindow < SGM_MAX_COST ? bitsInWindow : SGM_MAX_COST;
  for (let y = 0; y < height; y++) {
    if (signal?.aborted) checkAbortThrow();
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const base = (row + x) * stride;
      // levels with x - d inside the row: k in [kLo, kHi]
      const kLo = x - width + 1 - minD > 0 ? x - width + 1 - minD : 0;
      const kHi = x - minD < levels - 1 ? x - minD : levels - 1;
      for (let k = 0; k < kLo && k < levels; k++) cost[base + k] = outside;
      for (let k = kHi + 1 > 0 ? kHi + 1 : 0; k < levels; k++) cost[base + k] = outside;
      if (words === 2) {
        const a0 = bl[(row + x) * 2];
        const a1 = bl[(row + x) * 2 + 1];
        for (let k = kLo; k <= kHi; k++) {
          const q = (row + x - minD - k) * 2;
          let v = a0 ^ br[q];
          v = v - ((v >>> 1) & 0x55555555);
          v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
          v = (v + (v >>> 4)) & 0x0f0f0f0f;
          let w = a1 ^ br[q + 1];
          w = w - ((w >>> 1) & 0x55555555);
          w = (w & 0x33333333) + ((w >>> 2) & 0x33333333);
          w = (w + (w >>> 4)) & 0x0f0f0f0f;
          const h = (Math.imul(v, 0x01010101) >>> 24) + (Math.imul(w, 0x01010101) >>> 24);
          cost[base + k] = h < SGM_MAX_COST ? h : SGM_MAX_COST;
        }
      } else {
        const pl = (row + x) * words;
        for (let k = kLo; k <= kHi; k++) {
          const pr = (row + x - minD - k) * words;
          let h = 0;
          for (let j = 0; j < words; j++) {
            let v = bl[pl + j] ^ br[pr + j];
            v = v - ((v >>> 1) & 0x55555555);
            v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
            v = (v + (v >>> 4)) & 0x0f0f0f0f;
            h += Math.imul(v, 0x01010101) >>> 24;
          }
          cost[base + k] = h < SGM_MAX_COST ? h : SGM_MAX_COST;
        }
      }
    }
  }
}

/** Birchfield–Tomasi costs (rounded to integers, clamped to 255) into the arena. */
function fillBtCost(arena: SgmArena, input: MatchInput, minD: number, signal?: AbortSignal): void {
  const { width, height, levels, stride } = arena.layout;
  const loL = new Float32Array(width);
  const hiL = new Float32Array(width);
  const loR = new Float32Array(width);
  const hiR = new Float32Array(width);
  const L = input.left;
  const R = input.right;
  const cost = arena.cost;
  for (let y = 0; y < height; y++) {
    if (signal?.aborted) checkAbortThrow();
    const row = y * width;
    btExtremes(L, row, width, loL, hiL);
    btExtremes(R, row, width, loR, hiR);
    for (let x = 0; x < width; x++) {
      const base = (row + x) * stride;
      const iL = L[row + x];
      const lo = loL[x];
      const hi = hiL[x];
      for (let k = 0; k < levels; k++) {
        const xr = x - minD - k;
        if (xr < 0 || xr >= width) {
          cost[base + k] = SGM_MAX_COST;
          continue;
        }
        const c = Math.round(btPair(iL, lo, hi, R[row + xr], loR[xr], hiR[xr]));
        cost[base + k] = c < SGM_MAX_COST ? c : SGM_MAX_COST;
      }
    }
  }
}

function checkAbortThrow(): never {
  throw new AbortedError();
}

/** Valid levels of column x: k in [lo, hi] (x - d inside the row); empty when hi < lo. */
function validLevels(x: number, width: number, minD: number, levels: number): [number, number] {
  const lo = x - width + 1 - minD > 0 ? x - width + 1 - minD : 0;
  const hi = x - minD < levels - 1 ? x - minD : levels - 1;
  return [lo, hi];
}

/**
 * S with excluded candidates set to EXCLUDED_U16, in the compact layout wta.ts reads
 * (index p * levels + l). When levels is a multiple of 8 this is the arena's own sum.
 * Real sums are <= 65528 (overflow proof in kernels/sgm.ts), so 65535 is free.
 */
function compactSum(arena: SgmArena, minD: number): Uint16Array {
  const { width, height, levels, stride } = arena.layout;
  const sum = arena.sum;
  markExcluded(arena, minD);
  if (stride === levels) return sum;
  const out = new Uint16Array(width * height * levels);
  for (let p = 0, n = width * height; p < n; p++) {
    const s = p * stride;
    const d = p * levels;
    for (let k = 0; k < levels; k++) out[d + k] = sum[s + k];
  }
  return out;
}

/** Sets S of candidates with x - d outside the right image to EXCLUDED_U16. */
function markExcluded(arena: SgmArena, minD: number): void {
  const { width, height, levels, stride } = arena.layout;
  const sum = arena.sum;
  for (let x = 0; x < width; x++) {
    const [lo, hi] = validLevels(x, width, minD, levels);
    if (lo === 0 && hi === levels - 1) continue;
    for (let y = 0; y < height; y++) {
      const base = (y * width + x) * stride;
      for (let k = 0; k < levels; k++) if (k < lo || k > hi) sum[base + k] = EXCLUDED_U16;
    }
  }
}

/** Wall time (ms) of each stage of the last sgm match in this thread, for the benchmark. */
export const sgmStageTimes: Record<string, number> = {};

/** The sgm matcher as a plain function (the plugin's match). */
export async function sgmMatch(input: MatchInput, params: ParamValues, signal?: AbortSignal, sink?: ConfidenceSink): Promise<Float32Array> {
  const { width, height } = input;
  const { minDisparity, levels } = matchLevels(input);
  const full = withDefaults(SGM_PARAMS, params);
  const o = readSgmOptions(full);
  const post = readPostprocess(full);
  let t = performance.now();
  const lap = (name: string): void => {
    const now = performance.now();
    sgmStageTimes[name] = now - t;
    t = now;
  };
  const words = o.cost === 'census' ? censusWords(o.censusW, o.censusH) : 1;
  const arena = await createArena(width, height, levels, o.kernel, words);
  try {
    return runPipeline({ arena, input, minDisparity, levels, o, post, words, lap, signal, sink });
  } finally {
    arena.release();
  }
}

/** One match's pipeline: census (or BT) costs, aggregation, winner-take-all, post-processing. */
function runPipeline(job: {
  arena: SgmArena;
  input: MatchInput;
  minDisparity: number;
  levels: number;
  o: SgmOptions;
  post: PostprocessOptions;
  words: number;
  lap: (name: string) => void;
  signal: AbortSignal | undefined;
  sink: ConfidenceSink | undefined;
}): Float32Array {
  const { arena, input, minDisparity, levels, o, post, words, lap, signal, sink } = job;
  const { width, height } = input;
  fillGray(input.left, arena.gray);
  lap('setup');
  const st = arena.stages;
  if (st) {
    // WebAssembly pipeline: census, costs, aggregation, WTA in the module's memory
    const L = arena.layout;
    new Float32Array(arena.buffer, L.imgL, width * height).set(input.left);
    new Float32Array(arena.buffer, L.imgR, width * height).set(input.right);
    const rowVol = width * L.stride * 2;
    if (o.cost === 'census') {
      for (let y = 0; y < height; y++) {
        if (signal?.aborted) checkAbortThrow();
        st.censusRow(L.imgL, L.bitsL, width, height, y, o.censusW, o.censusH, words);
        st.censusRow(L.imgR, L.bitsR, width, height, y, o.censusW, o.censusH, words);
      }
      const outside = Math.min(o.censusW * o.censusH - 1, SGM_MAX_COST);
      for (let y = 0; y < height; y++) {
        if (signal?.aborted) checkAbortThrow();
        st.censusCostRow(L.bitsL, L.bitsR, L.cost + y * rowVol, width, y, levels, L.stride, minDisparity, words, outside);
      }
    } else fillBtCost(arena, input, minDisparity, signal);
    lap('cost');
    aggregatePaths(arena, { p1: o.p1, p2: o.p2, edgeK: o.p2edge, paths: o.paths }, signal);
    lap('aggregate');
    markExcluded(arena, minDisparity);
    for (let y = 0; y < height; y++) {
      if (signal?.aborted) checkAbortThrow();
      st.wtaRow(L.sum + y * rowVol, L.dispL + y * width * 4, width, levels, L.stride, minDisparity, post.subpix ? 1 : 0, post.uniq);
    }
    const dispL = new Float32Array(arena.buffer, L.dispL, width * height).slice();
    lap('wta');
    let dispR: Float32Array | null = null;
    if (post.lr > 0) {
      for (let y = 0; y < height; y++) {
        if (signal?.aborted) checkAbortThrow();
        st.wtaRightRow(L.sum + y * rowVol, L.dispR + y * width * 4, width, levels, L.stride, minDisparity, post.subpix ? 1 : 0, L.scratch);
      }
      dispR = new Float32Array(arena.buffer, L.dispR, width * height).slice();
    }
    lap('wtaRight');
    applyPostprocess(dispL, dispR, width, height, post, sink);
    lap('post');
    return dispL;
  }
  // TypeScript pipeline
  if (o.cost === 'census') fillCensusCost(arena, input, minDisparity, o, signal);
  else fillBtCost(arena, input, minDisparity, signal);
  lap('cost');
  aggregatePaths(arena, { p1: o.p1, p2: o.p2, edgeK: o.p2edge, paths: o.paths }, signal);
  lap('aggregate');
  const vol = compactSum(arena, minDisparity);
  return finishVolume(vol, { width, height, levels, minDisparity }, post, lap, sink);
}

export const sgmMatcher: MatcherPlugin = {
  id: 'sgm',
  summary: 'semi-global matching: census or BT cost, 4/8 paths (WebAssembly SIMD), WTA, LR check',
  version: '1.0.0',
  params: SGM_PARAMS,
  relations: [{ lower: 'p1', upper: 'p2' }],
  match: (input, params, signal) => matchWithConfidence((sink) => sgmMatch(input, params, signal, sink)),
  dispose() {
    dropKernelPool();
  },
};
