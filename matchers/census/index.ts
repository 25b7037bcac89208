/**
 * Built-in matcher `census`: census transform (Zabih & Woodfill 1994), Hamming
 * distance between bit strings as the pixel cost, box-sum aggregation over a square
 * window, winner-take-all, and the shared post-processing stages.
 * Candidates whose match x - d falls outside the right image are excluded.
 */
import type { MatcherPlugin, MatchInput, ParamValues } from '../../src/core/matcher.js';
import { boxSum } from '../kernels/box.js';
import { censusTransform, hammingSlice } from '../kernels/census.js';
import { matchWithConfidence, POSTPROCESS_PARAMS, readPostprocess } from '../kernels/postprocess.js';
import { matchLevels } from '../kernels/range.js';
import { copyRowsU32, matchBySlices, type SliceFn, type SliceRun, type StripSource } from '../kernels/slices.js';

export interface CensusOptions {
  /** Census window width and height (odd). */
  censusW: number;
  censusH: number;
  /** Aggregation window side (odd; 1 = no aggregation). */
  window: number;
}

export function readCensusOptions(params: ParamValues): CensusOptions {
  const n = (k: string, d: number): number => {
    const v = params[k];
    return typeof v === 'number' ? v : d;
  };
  return { censusW: n('censusW', 9), censusH: n('censusH', 7), window: n('window', 5) };
}

/** The census matcher as a plain function (the plugin's match); run.stripRows is for tests (see kernels/slices.ts). */
export function censusMatch(input: MatchInput, params: ParamValues, signal?: AbortSignal, run: SliceRun = {}): Float32Array {
  const { stripRows, sink } = run;
  const { width, height, left, right } = input;
  const { minDisparity, levels } = matchLevels(input);
  const opts = readCensusOptions(params);
  const post = readPostprocess(params);
  const cl = censusTransform(left, width, height, opts.censusW, opts.censusH);
  const cr = censusTransform(right, width, height, opts.censusW, opts.censusH);
  const radius = (opts.window - 1) >> 1;
  // The census strings of the whole image, once; strips copy their rows (replicated at
  // the top and bottom), so aggregation over a strip equals aggregation over the image.
  const source: StripSource = {
    halo: radius,
    strip(rows: Int32Array): SliceFn {
      const sh = rows.length;
      const bl = copyRowsU32(cl.bits, width, cl.words, rows);
      const br = copyRowsU32(cr.bits, width, cr.words, rows);
      if (radius === 0) return (d, out) => hammingSlice(bl, br, cl.words, width, sh, d, out);
      const ham = new Float64Array(width * sh);
      const tmp = new Float64Array(width * sh);
      return (d, out) => {
        hammingSlice(bl, br, cl.words, width, sh, d, ham);
        boxSum(ham, out, width, sh, radius, tmp);
      };
    },
  };
  return matchBySlices(width, height, minDisparity, levels, post, signal, source, stripRows, sink);
}

export const censusMatcher: MatcherPlugin = {
  id: 'census',
  summary: 'census transform with Hamming cost, box aggregation, winner-take-all',
  version: '1.0.0',
  params: [
    { name: 'censusW', type: 'int', default: 9, min: 3, max: 15, odd: true, description: 'census window width, px (odd)' },
    { name: 'censusH', type: 'int', default: 7, min: 1, max: 15, odd: true, description: 'census window height, px (odd)' },
    {
      name: 'window',
      type: 'int',
      default: 5,
      min: 1,
      max: 51,
      odd: true,
      description: 'aggregation window side, px (odd; 1 = none)',
    },
    ...POSTPROCESS_PARAMS,
  ],
  match(input, params, signal) {
    return matchWithConfidence((sink) => censusMatch(input, params, signal, { sink }));
  },
};
