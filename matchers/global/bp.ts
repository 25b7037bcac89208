/**
 * Loopy belief propagation, min-sum, on the 4-connected pixel grid, after
 * P. Felzenszwalb and D. Huttenlocher, "Efficient belief propagation for early
 * vision", IJCV 70(1), 2006:
 *  - energy E(f) = sum_p D_p(f_p) + sum_{(p,q)} V(f_p - f_q), with
 *    V(a) = min(s |a|, eta) (truncated linear) or V(a) = 0 if a = 0, eta otherwise (Potts);
 *  - message update m_{p->q}(d) = min_d' ( h(d') + V(d - d') ), h = D_p + sum of the
 *    messages into p except the one from q, in O(levels) by the distance-transform
 *    passes (forward d = 1..L-1, backward d = L-2..0, then a min with min h + eta);
 *  - bipartite ("checkerboard") schedule: on iteration t only pixels with
 *    (x + y + t) even send, so half the messages are computed per iteration;
 *  - coarse to fine: level l+1 groups 2x2 pixels of level l, its data cost is the sum
 *    of theirs; messages of level l start from the parent's messages.
 * Messages are normalised by subtracting their minimum (min-sum is invariant to it).
 *
 * Layout: every per-pixel vector is a Float32Array slice [p * levels, (p + 1) * levels).
 * Messages are stored at the receiver: up[p] is the message p received from its upper
 * neighbour, down/left/right likewise.
 */
import { AbortedError } from '../../src/core/errors.js';

export interface BpSolveOptions {
  /** Smoothness slope s per level of difference (linear model). */
  smooth: number;
  /** Smoothness truncation eta (linear) or the Potts jump cost. */
  trunc: number;
  model: 'linear' | 'potts';
  /** Iterations per scale. */
  iters: number;
  /** Number of scales (1 = no pyramid). */
  scales: number;
}

export interface Messages {
  up: Float32Array;
  down: Float32Array;
  left: Float32Array;
  right: Float32Array;
}

function newMessages(n: number): Messages {
  return { up: new Float32Array(n), down: new Float32Array(n), left: new Float32Array(n), right: new Float32Array(n) };
}

/** Data cost of the next coarser scale: sum over each 2x2 block (FH 2006, sec. 3.3). */
export function coarsenData(
  data: Float32Array,
  width: number,
  height: number,
  levels: number,
): { data: Float32Array; width: number; height: number } {
  const w2 = (width + 1) >> 1;
  const h2 = (height + 1) >> 1;
  const out = new Float32Array(w2 * h2 * levels);
  for (let y = 0; y < height; y++) {
    const yc = y >> 1;
    for (let x = 0; x < width; x++) {
      const src = (y * width + x) * levels;
      const dst = (yc * w2 + (x >> 1)) * levels;
      for (let k = 0; k < levels; k++) out[dst + k] += data[src + k];
    }
  }
  return { data: out, width: w2, height: h2 };
}

/** Messages of a finer scale initialised from the coarser scale's (each child copies its parent). */
export function refineMessages(
  coarse: Messages,
  wc: number,
  width: number,
  height: number,
  levels: number,
): Messages {
  const fine = newMessages(width * height * levels);
  const pairs: [Float32Array, Float32Array][] = [
    [coarse.up, fine.up],
    [coarse.down, fine.down],
    [coarse.left, fine.left],
    [coarse.right, fine.right],
  ];
  for (const [c, f] of pairs) {
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        const src = ((y >> 1) * wc + (x >> 1)) * levels;
        const dst = (y * width + x) * levels;
        for (let k = 0; k < levels; k++) f[dst + k] = c[src + k];
      }
    }
  }
  return fine;
}

/**
 * m_out(d) = min_d' (h(d') - hExcl(d') + V(d - d')) - its minimum, written at out[outBase..].
 * `scratch` has `levels` floats.
 */
export function sendMessage(
  h: Float32Array,
  excl: Float32Array,
  exclBase: number,
  out: Float32Array,
  outBase: number,
  levels: number,
  smooth: number,
  trunc: number,
  linear: boolean,
  scratch: Float32Array,
): void {
  let mn = Infinity;
  for (let k = 0; k < levels; k++) {
    const v = h[k] - excl[exclBase + k];
    scratch[k] = v;
    if (v < mn) mn = v;
  }
  if (linear) {
    // distance transform of the linear term: two passes
    for (let k = 1; k < levels; k++) {
      const c = scratch[k - 1] + smooth;
      if (c < scratch[k]) scratch[k] = c;
    }
    for (let k = levels - 2; k >= 0; k--) {
      const c = scratch[k + 1] + smooth;
      if (c < scratch[k]) scratch[k] = c;
    }
  }
  const cap = mn + trunc;
  // after the passes the minimum is still mn, so normalising subtracts mn
  for (let k = 0; k < levels; k++) {
    const v = scratch[k];
    out[outBase + k] = (v < cap ? v : cap) - mn;
  }
}

/** Runs `iters` bipartite iterations at one scale, updating `msgs` in place. */
export function iterateScale(
  data: Float32Array,
  width: number,
  height: number,
  levels: number,
  msgs: Messages,
  o: BpSolveOptions,
  signal?: AbortSignal,
): void {
  const { up, down, left, right } = msgs;
  const h = new Float32Array(levels);
  const scratch = new Float32Array(levels);
  const linear = o.model === 'linear';
  for (let t = 0; t < o.iters; t++) {
    for (let y = 0; y < height; y++) {
      if (signal?.aborted) throw new AbortedError();
      const x0 = (y + t) & 1;
      for (let x = x0; x < width; x += 2) {
        const p = y * width + x;
        const b = p * levels;
        for (let k = 0; k < levels; k++) h[k] = data[b + k] + up[b + k] + down[b + k] + left[b + k] + right[b + k];
        // to the upper neighbour q = p - width, which stores it as "from below"
        if (y > 0) sendMessage(h, up, b, down, b - width * levels, levels, o.smooth, o.trunc, linear, scratch);
        if (y < height - 1) sendMessage(h, down, b, up, b + width * levels, levels, o.smooth, o.trunc, linear, scratch);
        if (x > 0) sendMessage(h, left, b, right, b - levels, levels, o.smooth, o.trunc, linear, scratch);
        if (x < width - 1) sendMessage(h, right, b, left, b + levels, levels, o.smooth, o.trunc, linear, scratch);
      }
    }
  }
}

/**
 * Full coarse-to-fine solve. Returns the beliefs b(p, d) = D_p(d) + sum of incoming
 * messages at the finest scale (lower is better), layout [p][level], written over
 * `data` (which is returned) to save one volume.
 */
export function solveBp(
  data: Float32Array,
  width: number,
  height: number,
  levels: number,
  o: BpSolveOptions,
  signal?: AbortSignal,
): Float32Array {
  // pyramid of data costs, finest first
  const pyr: { data: Float32Array; width: number; height: number }[] = [{ data, width, height }];
  for (let s = 1; s < o.scales; s++) {
    const prev = pyr[s - 1];
    if (prev.width < 2 && prev.height < 2) break;
    pyr.push(coarsenData(prev.data, prev.width, prev.height, levels));
  }
  let msgs: Messages | null = null;
  for (let s = pyr.length - 1; s >= 0; s--) {
    const lv = pyr[s];
    msgs =
      msgs === null
        ? newMessages(lv.width * lv.height * levels)
        : refineMessages(msgs, pyr[s + 1].width, lv.width, lv.height, levels);
    iterateScale(lv.data, lv.width, lv.height, levels, msgs, o, signal);
  }
  const m = msgs!;
  const n = width * height * levels;
  for (let i = 0; i < n; i++) data[i] = data[i] + m.up[i] + m.down[i] + m.left[i] + m.right[i];
  return data;
}
