/**
 * The driver shared by matchers that compute one aggregated cost slice per
 * disparity (block, census): slices in level order -> streaming WTA (left view,
 * and the right view when the left-right check is on) -> shared post-processing.
 * The cost volume is never held: memory is a few width*height buffers.
 *
 *   matchBySlices(width, height, minDisparity, levels, post, signal, slice): Float32Array
 *     slice(d, out) writes the cost of every left pixel at disparity d into out.
 *     It is not called for disparities with no candidate at all (|d| >= width).
 *     `signal` is checked before every slice; an aborted signal throws AbortedError.
 */
import { AbortedError } from '../../src/core/errors.js';
import { applyPostprocess, type PostprocessOptions } from './postprocess.js';
import { levelHasCandidates } from './range.js';
import { createSliceWta, sliceWtaAdd, sliceWtaFinish } from './wta.js';

export function matchBySlices(
  width: number,
  height: number,
  minDisparity: number,
  levels: number,
  post: PostprocessOptions,
  signal: AbortSignal | undefined,
  slice: (d: number, out: Float64Array) => void,
): Float32Array {
  const state = createSliceWta(width, height, levels, minDisparity, {
    subpix: post.subpix,
    uniqueness: post.uniq,
    right: post.lr > 0,
  });
  const buf = new Float64Array(width * height);
  for (let l = 0; l < levels; l++) {
    if (signal?.aborted) throw new AbortedError();
    const d = minDisparity + l;
    // A level without candidates is still fed (its values are ignored) to keep levels in order.
    if (levelHasCandidates(d, width)) slice(d, buf);
    sliceWtaAdd(state, buf);
  }
  const { left, right } = sliceWtaFinish(state);
  applyPostprocess(left, right, width, height, post);
  return left;
}
