/**
 * The driver shared by matchers that compute one aggregated cost slice per
 * disparity (block, census): slices in level order -> streaming WTA (left view,
 * and the right view when the left-right check is on) -> shared post-processing.
 * The cost volume is never held.
 *
 * Strips: the image is processed in horizontal strips of about STRIP_PIXELS
 * pixels, each extended by `halo` rows above and below (row indices clamped into
 * the image, i.e. replicated at its top and bottom). All disparities of one strip
 * are done before the next, so memory stays a few strip-sized buffers whatever the
 * image size. A core row only depends on rows within `halo`, so the result equals a
 * whole-image run exactly (a test checks this).
 *
 *   matchBySlices(width, height, minDisparity, levels, post, signal, source, stripRows?): Float32Array
 *     source.halo      rows of context one row's aggregated cost needs above and below
 *     source.strip(rows) is called once per strip with the image rows of the strip
 *                      (Int32Array, halo included, clamped); it returns
 *                      slice(d, out), which writes the cost of every strip pixel at
 *                      disparity d into out (index i * width + x for strip row i).
 *     slice is not called for disparities without any candidate (|d| >= width).
 *     `signal` is checked before every slice; an aborted signal throws AbortedError.
 *     stripRows overrides the core rows per strip (tests; default from STRIP_PIXELS).
 */
import { AbortedError } from '../../src/core/errors.js';
import { applyPostprocess, type ConfidenceSink, type PostprocessOptions } from './postprocess.js';
import { levelHasCandidates } from './range.js';
import { createSliceWta, sliceWtaAdd, sliceWtaFinish } from './slice-wta.js';

/**
 * Target pixels per strip core. Measured on 1280x720 (2-core machine under load): 64-,
 * 205- and 720-row strips ran equally fast, so strips serve memory, not speed: they
 * bound the working buffers to about a dozen of STRIP_PIXELS * 8 bytes (~25 MB) on any
 * image size, with a halo overhead of 2 * halo / rows (4% for halo 4 at 205 rows).
 */
export const STRIP_PIXELS = 1 << 18;

export type SliceFn = (d: number, out: Float64Array) => void;

export interface StripSource {
  readonly halo: number;
  strip(rows: Int32Array): SliceFn;
}

/** How a strip-wise match runs: strip height (tests), and where its confidence goes. */
export interface SliceRun {
  stripRows?: number;
  sink?: ConfidenceSink;
}

export function matchBySlices(
  width: number,
  height: number,
  minDisparity: number,
  levels: number,
  post: PostprocessOptions,
  signal: AbortSignal | undefined,
  source: StripSource,
  stripRows?: number,
  sink?: ConfidenceSink,
): Float32Array {
  const n = width * height;
  const left = new Float32Array(n);
  const right = post.lr > 0 ? new Float32Array(n) : null;
  const halo = source.halo;
  const core = Math.max(1, stripRows ?? Math.max(16, Math.ceil(STRIP_PIXELS / width)));
  for (let y0 = 0; y0 < height; y0 += core) {
    const y1 = Math.min(height, y0 + core);
    const sh = y1 - y0 + 2 * halo;
    const rows = new Int32Array(sh);
    for (let i = 0; i < sh; i++) {
      const y = y0 - halo + i;
      rows[i] = y < 0 ? 0 : y >= height ? height - 1 : y;
    }
    const slice = source.strip(rows);
    const state = createSliceWta(width, sh, levels, minDisparity, {
      subpix: post.subpix,
      uniqueness: post.uniq,
      right: right !== null,
    });
    // Two buffers in turn: the WTA state keeps the previous slice by reference.
    const bufA = new Float64Array(width * sh);
    const bufB = new Float64Array(width * sh);
    for (let l = 0; l < levels; l++) {
      if (signal?.aborted) throw new AbortedError();
      const buf = (l & 1) === 0 ? bufA : bufB;
      const d = minDisparity + l;
      // A level without candidates is still fed (its values are ignored) to keep levels in order.
      if (levelHasCandidates(d, width)) slice(d, buf);
      sliceWtaAdd(state, buf);
    }
    const res = sliceWtaFinish(state);
    const from = halo * width;
    const count = (y1 - y0) * width;
    left.set(res.left.subarray(from, from + count), y0 * width);
    if (right !== null && res.right !== null) right.set(res.right.subarray(from, from + count), y0 * width);
  }
  applyPostprocess(left, right, width, height, post, sink);
  return left;
}

/** Copies the given image rows (clamped indices) of a row-major image into a strip image. */
export function copyRows(src: Float32Array, width: number, rows: Int32Array): Float32Array {
  const out = new Float32Array(rows.length * width);
  for (let i = 0; i < rows.length; i++) out.set(src.subarray(rows[i] * width, rows[i] * width + width), i * width);
  return out;
}

/** Same for per-pixel records of `words` uint32 each (census strings). */
export function copyRowsU32(src: Uint32Array, width: number, words: number, rows: Int32Array): Uint32Array {
  const rw = width * words;
  const out = new Uint32Array(rows.length * rw);
  for (let i = 0; i < rows.length; i++) out.set(src.subarray(rows[i] * rw, rows[i] * rw + rw), i * rw);
  return out;
}
