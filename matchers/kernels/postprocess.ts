/**
 * Post-processing stages any matcher can switch on, all pure functions over
 * Float32Array disparity maps (row-major, NaN = no answer), editing in place.
 *
 * Public API (stable; every built-in matcher exposes the same stages under the same names):
 *
 *   subpixelParabola(cm, c0, cp): number
 *     Offset of the vertex of the parabola through (-1, cm), (0, c0), (+1, cp):
 *     (cm - cp) / (2 * (cm - 2 c0 + cp)), clamped to [-0.5, 0.5]; 0 when the three
 *     costs are not strictly convex (denominator <= 0) or a cost is not finite.
 *     The WTA stage (wta.ts) applies it at the winning level, never at a range end.
 *
 *   leftRightCheck(dispL, dispR, width, height, maxDiff, conf?): void
 *     dispR is the right view's disparity (d = x_left - x_right, indexed by x_right).
 *     A finite dL at (x, y) becomes NaN when xr = x - round(dL) is outside [0, width),
 *     when dR(xr, y) is NaN, or when |dL - dR(xr, y)| > maxDiff. round = Math.round
 *     (halves go up). With `conf`, each pixel that passes gets the confidence
 *     -|dL - dR(xr, y)| (0 = both views agree exactly, higher = more trusted) and every
 *     other pixel NaN (no confidence; a hole filled later keeps it).
 *
 *   removeSpeckles(disp, width, height, maxSize, maxDiff): void
 *     4-connected components of finite pixels whose neighbours differ by at most
 *     maxDiff; every component of at most maxSize pixels becomes NaN. Iterative
 *     flood fill with an explicit Int32Array stack.
 *
 *   fillHoles(disp, width, height, mode): void
 *     Along each row, a run of NaN between two valid pixels a (left) and b (right) is
 *     filled with min(a, b) in mode 'background' (the lower disparity is the farther
 *     surface, the one an occlusion shows: common practice for occlusion filling), or
 *     with the straight line from a to b in mode 'linear'. A run that touches the row's
 *     start or end takes its one valid neighbour; a row with no valid pixel stays NaN.
 *
 *   POSTPROCESS_PARAMS: ParamSpec[]  the shared parameter block:
 *     lr (px, 0 = off), subpix (boolean), uniq (%, 0 = off), speckle (px count, 0 = off),
 *     speckleDiff (px), fill (boolean; 'background' mode)
 *   postprocessParamsWith(defaults): ParamSpec[]  the same block with a matcher's own defaults
 *   readPostprocess(params): PostprocessOptions   reads those names (after defaults)
 *   applyPostprocess(dispL, dispR | null, width, height, opts, sink?): void
 *     runs, in this order: left-right check (when lr > 0 and dispR is given),
 *     speckle removal (when speckle > 0), hole filling (when fill). With a sink and a
 *     left-right check, sink.confidence receives the check's confidence map: the
 *     built-in matchers' confidence (none when lr = 0).
 *   matchWithConfidence(run): the plugin side: runs a match with a sink and returns
 *     { disparity, confidence } when the match left a confidence, else the disparity.
 *     subpix and uniq are WTA options: pass them to wta.ts.
 */
import type { MatchOutput, ParamSpec, ParamValues } from '../../src/core/matcher.js';

/** Where a match leaves its confidence map for the plugin's match to return. */
export interface ConfidenceSink {
  confidence?: Float32Array;
}

/** Run a match with a sink; its disparity, with the confidence when the match left one. */
export async function matchWithConfidence(run: (sink: ConfidenceSink) => Float32Array | Promise<Float32Array>): Promise<Float32Array | MatchOutput> {
  const sink: ConfidenceSink = {};
  const disparity = await run(sink);
  return sink.confidence ? { disparity, confidence: sink.confidence } : disparity;
}

/** Vertex offset of the parabola through three equally spaced costs, clamped to ±0.5. */
export function subpixelParabola(cm: number, c0: number, cp: number): number {
  const den = cm - 2 * c0 + cp;
  if (!(den > 0) || !Number.isFinite(cm) || !Number.isFinite(cp)) return 0;
  const off = (cm - cp) / (2 * den);
  return off > 0.5 ? 0.5 : off < -0.5 ? -0.5 : off;
}

/** Marks NaN where the left and right maps disagree; see the file header. */
// The image loop opens like the WTA's in wta.ts; only the loop header is shared, the bodies differ.
export function leftRightCheck(
  dispL: Float32Array,
  dispR: Float32Array,
  width: number,
  height: number,
  maxDiff: number,
  conf?: Float32Array,
): void {
  if (conf) conf.fill(NaN);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const p = row + x;
      const dl = dispL[p];
      if (dl !== dl) continue;
      const xr = x - Math.round(dl);
      if (xr < 0 || xr >= width) {
        dispL[p] = NaN;
        continue;
      }
      const dr = dispR[row + xr];
      // NaN dr fails the comparison below too (NaN > maxDiff is false, so test explicitly).
      const diff = Math.abs(dl - dr);
      if (dr !== dr || diff > maxDiff) dispL[p] = NaN;
      else if (conf) conf[p] = -diff;
    }
  }
}

/** Removes small blobs of similar disparity; see the file header. */
export function removeSpeckles(
  disp: Float32Array,
  width: number,
  height: number,
  maxSize: number,
  maxDiff: number,
): void {
  const n = width * height;
  if (maxSize <= 0 || n === 0) return;
  const seen = new Uint8Array(n);
  // The stack doubles as the list of the component's pixels: pixels are pushed at
  // `top` and never popped off the array, only read at `head`.
  const list = new Int32Array(n);
  for (let s = 0; s < n; s++) {
    if (seen[s] === 1) continue;
    const v0 = disp[s];
    if (v0 !== v0) {
      seen[s] = 1;
      continue;
    }
    seen[s] = 1;
    let top = 0;
    let head = 0;
    list[top++] = s;
    while (head < top) {
      const p = list[head++];
      const v = disp[p];
      const x = p % width;
      // left
      if (x > 0) {
        const q = p - 1;
        if (seen[q] === 0) {
          const w = disp[q];
          if (w === w && Math.abs(w - v) <= maxDiff) {
            seen[q] = 1;
            list[top++] = q;
          }
        }
      }
      if (x < width - 1) {
        const q = p + 1;
        if (seen[q] === 0) {
          const w = disp[q];
          if (w === w && Math.abs(w - v) <= maxDiff) {
            seen[q] = 1;
            list[top++] = q;
          }
        }
      }
      if (p >= width) {
        const q = p - width;
        if (seen[q] === 0) {
          const w = disp[q];
          if (w === w && Math.abs(w - v) <= maxDiff) {
            seen[q] = 1;
            list[top++] = q;
          }
        }
      }
      if (p + width < n) {
        const q = p + width;
        if (seen[q] === 0) {
          const w = disp[q];
          if (w === w && Math.abs(w - v) <= maxDiff) {
            seen[q] = 1;
            list[top++] = q;
          }
        }
      }
    }
    if (top <= maxSize) {
      for (let i = 0; i < top; i++) disp[list[i]] = NaN;
    }
  }
}

export type FillMode = 'background' | 'linear';

/** Fills NaN runs along each row; see the file header. */
export function fillHoles(disp: Float32Array, width: number, height: number, mode: FillMode): void {
  const linear = mode === 'linear';
  for (let y = 0; y < height; y++) {
    const row = y * width;
    let lastValid = -1; // x of the last valid pixel seen
    let x = 0;
    while (x < width) {
      const v = disp[row + x];
      if (v === v) {
        lastValid = x;
        x++;
        continue;
      }
      // a NaN run starts at x
      let e = x;
      while (e < width && disp[row + e] !== disp[row + e]) e++;
      // run is [x, e)
      const hasA = lastValid >= 0;
      const hasB = e < width;
      if (hasA || hasB) {
        const a = hasA ? disp[row + lastValid] : 0;
        const b = hasB ? disp[row + e] : 0;
        if (hasA && hasB) {
          if (linear) {
            const span = e - lastValid;
            for (let i = x; i < e; i++) disp[row + i] = a + ((b - a) * (i - lastValid)) / span;
          } else {
            const f = a < b ? a : b;
            for (let i = x; i < e; i++) disp[row + i] = f;
          }
        } else {
          const f = hasA ? a : b;
          for (let i = x; i < e; i++) disp[row + i] = f;
        }
      }
      x = e;
    }
  }
}

export interface PostprocessOptions {
  /** Left-right check: largest |dL - dR| kept, px; 0 = off. */
  lr: number;
  /** Subpixel parabola at the winning level. */
  subpix: boolean;
  /** Uniqueness margin in %; 0 = off. */
  uniq: number;
  /** Remove blobs of at most this many pixels; 0 = off. */
  speckle: number;
  /** Largest disparity step between 4-neighbours inside one blob, px. */
  speckleDiff: number;
  /** Fill holes along rows with the background neighbour. */
  fill: boolean;
}

/** The shared post-processing parameters; every built-in matcher appends these to its own. */
export const POSTPROCESS_PARAMS: readonly ParamSpec[] = [
  {
    name: 'lr',
    type: 'number',
    default: 1,
    min: 0,
    max: 64,
    description: 'left-right check: largest |dL - dR| kept, px (0 = off)',
  },
  { name: 'subpix', type: 'boolean', default: true, description: 'subpixel parabola fit at the winning level' },
  {
    name: 'uniq',
    type: 'number',
    default: 0,
    min: 0,
    max: 100,
    description: 'uniqueness margin, %: no answer when a non-adjacent level costs within this margin of the best (0 = off)',
  },
  {
    name: 'speckle',
    type: 'int',
    default: 0,
    min: 0,
    max: 1_000_000,
    description: 'remove blobs of similar disparity of at most this many pixels (0 = off)',
  },
  {
    name: 'speckleDiff',
    type: 'number',
    default: 1,
    min: 0,
    max: 64,
    description: 'largest disparity step between neighbours inside one blob, px',
  },
  { name: 'fill', type: 'boolean', default: false, description: 'fill holes along rows with the farther neighbour' },
];

function num(params: ParamValues, name: string, dflt: number): number {
  const v = params[name];
  return typeof v === 'number' ? v : dflt;
}
function bool(params: ParamValues, name: string, dflt: boolean): boolean {
  const v = params[name];
  return typeof v === 'boolean' ? v : dflt;
}

/** POSTPROCESS_PARAMS with some defaults replaced (a matcher's own choice of defaults). */
export function postprocessParamsWith(defaults: Readonly<Record<string, number | boolean>>): ParamSpec[] {
  return POSTPROCESS_PARAMS.map((p) => {
    const d = defaults[p.name];
    return d === undefined ? p : ({ ...p, default: d } as ParamSpec);
  });
}

/** Reads the shared post-processing parameters (missing ones take the defaults above). */
export function readPostprocess(params: ParamValues): PostprocessOptions {
  return {
    lr: num(params, 'lr', 1),
    subpix: bool(params, 'subpix', true),
    uniq: num(params, 'uniq', 0),
    speckle: num(params, 'speckle', 0),
    speckleDiff: num(params, 'speckleDiff', 1),
    fill: bool(params, 'fill', false),
  };
}

/** Left-right check, speckle removal, hole filling, in that order, each when switched on. */
export function applyPostprocess(
  dispL: Float32Array,
  dispR: Float32Array | null,
  width: number,
  height: number,
  opts: PostprocessOptions,
  sink?: ConfidenceSink,
): void {
  if (opts.lr > 0 && dispR) {
    const conf = sink ? new Float32Array(width * height) : undefined;
    leftRightCheck(dispL, dispR, width, height, opts.lr, conf);
    if (sink && conf) sink.confidence = conf;
  }
  if (opts.speckle > 0) removeSpeckles(dispL, width, height, opts.speckle, opts.speckleDiff);
  if (opts.fill) fillHoles(dispL, width, height, 'background');
}
