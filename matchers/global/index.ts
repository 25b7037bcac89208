/**
 * Built-in matcher `bp`: a global energy method, loopy min-sum belief propagation on
 * the 4-connected grid (Felzenszwalb & Huttenlocher 2006; see ./bp.ts).
 *
 * Data term: weight * min(cost, dataTrunc) with cost the census Hamming distance or
 * the Birchfield–Tomasi dissimilarity on luminance. Candidates whose match x - d is
 * outside the right image take the truncated (largest) data cost while messages are
 * passed and are excluded from the final winner-take-all on the beliefs.
 * Then the shared post-processing (left-right check against the right-view WTA on the
 * beliefs, subpixel parabola, speckles, hole filling).
 */
import { AbortedError, UsageError } from '../../src/core/errors.js';
import { withDefaults, type MatcherPlugin, type MatchInput, type ParamSpec, type ParamValues } from '../../src/core/matcher.js';
import { btExtremes, btPair } from '../kernels/bt.js';
import { censusTransform, popcount32 } from '../kernels/census.js';
import { matchWithConfidence, postprocessParamsWith, readPostprocess, type ConfidenceSink } from '../kernels/postprocess.js';
import { matchLevels } from '../kernels/range.js';
import { solveBp, type BpSolveOptions } from './bp.js';
import { finishVolume } from '../kernels/finish.js';

export interface BpOptions extends BpSolveOptions {
  cost: 'census' | 'bt';
  censusW: number;
  censusH: number;
  /** Data weight (lambda). */
  weight: number;
  /** Data truncation, in cost units before weighting. */
  dataTrunc: number;
}

const BP_POST_DEFAULTS: Record<string, number | boolean> = { lr: 0, uniq: 0, speckle: 0, fill: true };

export const BP_PARAMS: readonly ParamSpec[] = [
  { name: 'cost', type: 'enum', default: 'census', values: ['census', 'bt'], description: 'pixel cost of the data term' },
  { name: 'censusW', type: 'int', default: 7, min: 3, max: 15, odd: true, description: 'census window width, px (odd)' },
  { name: 'censusH', type: 'int', default: 5, min: 1, max: 15, odd: true, description: 'census window height, px (odd)' },
  { name: 'weight', type: 'number', default: 1, min: 0, max: 1000, description: 'data term weight' },
  { name: 'dataTrunc', type: 'number', default: 20, min: 0, max: 1000, description: 'data cost truncation (cost units)' },
  { name: 'model', type: 'enum', default: 'linear', values: ['linear', 'potts'], description: 'smoothness model' },
  { name: 'smooth', type: 'number', default: 6, min: 0, max: 1000, description: 'smoothness cost per level of difference (linear)' },
  { name: 'trunc', type: 'number', default: 18, min: 0, max: 10000, description: 'smoothness truncation (linear) or jump cost (potts)' },
  { name: 'iters', type: 'int', default: 5, min: 1, max: 200, description: 'message-passing iterations per scale' },
  { name: 'scales', type: 'int', default: 5, min: 1, max: 12, description: 'coarse-to-fine scales (1 = single scale)' },
  ...postprocessParamsWith(BP_POST_DEFAULTS),
];

export function readBpOptions(params: ParamValues): BpOptions {
  const full = withDefaults(BP_PARAMS, params);
  const n = (k: string): number => Number(full[k]);
  const o: BpOptions = {
    cost: full.cost === 'bt' ? 'bt' : 'census',
    censusW: n('censusW'),
    censusH: n('censusH'),
    weight: n('weight'),
    dataTrunc: n('dataTrunc'),
    model: full.model === 'potts' ? 'potts' : 'linear',
    smooth: n('smooth'),
    trunc: n('trunc'),
    iters: n('iters'),
    scales: n('scales'),
  };
  for (const k of ['weight', 'dataTrunc', 'smooth', 'trunc', 'iters', 'scales', 'censusW', 'censusH'] as const) {
    if (!Number.isFinite(o[k]) || o[k] < 0) throw new UsageError('--matcher', `bp: ${k}=${String(full[k])} is not a non-negative number`);
  }
  return o;
}

/** Data term volume [p][level]: weight * min(cost, dataTrunc); excluded candidates get the cap. */
export function bpDataCost(
  input: MatchInput,
  minD: number,
  levels: number,
  o: BpOptions,
  signal?: AbortSignal,
): Float32Array {
  const { width, height, left, right } = input;
  if (o.cost === 'census') {
    const cl = censusTransform(left, width, height, o.censusW, o.censusH);
    const cr = censusTransform(right, width, height, o.censusW, o.censusH);
    const words = cl.words;
    return fillDataVolume(input, minD, levels, o, signal, {
      row: () => undefined,
      cost(row, x, xr) {
        const pl = (row + x) * words;
        const pr = (row + xr) * words;
        let hd = 0;
        for (let j = 0; j < words; j++) hd += popcount32(cl.bits[pl + j] ^ cr.bits[pr + j]);
        return hd;
      },
    });
  }
  const loL = new Float32Array(width);
  const hiL = new Float32Array(width);
  const loR = new Float32Array(width);
  const hiR = new Float32Array(width);
  return fillDataVolume(input, minD, levels, o, signal, {
    row(row) {
      btExtremes(left, row, width, loL, hiL);
      btExtremes(right, row, width, loR, hiR);
    },
    cost: (row, x, xr) => btPair(left[row + x], loL[x], hiL[x], right[row + xr], loR[xr], hiR[xr]),
  });
}

/** A pixel cost of the data term: `row` prepares a row (offset y * width), `cost` prices left x against right xr. */
interface PixelCost {
  row(row: number): void;
  cost(row: number, x: number, xr: number): number;
}

function fillDataVolume(
  input: MatchInput,
  minD: number,
  levels: number,
  o: BpOptions,
  signal: AbortSignal | undefined,
  pixel: PixelCost,
): Float32Array {
  const { width, height } = input;
  const vol = new Float32Array(width * height * levels);
  const cap = o.weight * o.dataTrunc;
  for (let y = 0; y < height; y++) {
    if (signal?.aborted) throw new AbortedError();
    const row = y * width;
    pixel.row(row);
    for (let x = 0; x < width; x++) {
      const base = (row + x) * levels;
      for (let k = 0; k < levels; k++) {
        const xr = x - minD - k;
        if (xr < 0 || xr >= width) {
          vol[base + k] = cap;
          continue;
        }
        const c = pixel.cost(row, x, xr);
        vol[base + k] = o.weight * (c < o.dataTrunc ? c : o.dataTrunc);
      }
    }
  }
  return vol;
}

/** The bp matcher as a plain function (the plugin's match). */
export function bpMatch(input: MatchInput, params: ParamValues, signal?: AbortSignal, sink?: ConfidenceSink): Float32Array {
  const { width, height } = input;
  const { minDisparity, levels } = matchLevels(input);
  const full = withDefaults(BP_PARAMS, params);
  const o = readBpOptions(full);
  const post = readPostprocess(full);
  const data = bpDataCost(input, minDisparity, levels, o, signal);
  const belief = solveBp(data, width, height, levels, o, signal);
  // exclude candidates outside the right image from the WTA (Infinity = excluded in wta.ts)
  for (let x = 0; x < width; x++) {
    for (let k = 0; k < levels; k++) {
      const xr = x - minDisparity - k;
      if (xr >= 0 && xr < width) continue;
      for (let y = 0; y < height; y++) belief[(y * width + x) * levels + k] = Infinity;
    }
  }
  return finishVolume(belief, { width, height, levels, minDisparity }, post, undefined, sink);
}

// The match's end and the plugin literal have sgm/index.ts's shape on purpose: each built-in
// declares its own id, version and parameters in one object, as the contract asks.
export const bpMatcher: MatcherPlugin = {
  id: 'bp',
  summary: 'loopy min-sum belief propagation, truncated linear or Potts smoothness, coarse to fine',
  version: '1.0.0',
  params: BP_PARAMS,
  match: (input, params, signal) => matchWithConfidence((sink) => bpMatch(input, params, signal, sink)),
};
