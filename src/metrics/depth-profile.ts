/**
 * The depth profile of a region: its pixels by true distance, in fine bins of
 * 1/PROFILE_BINS_PER_OCTAVE of a doubling (bin k holds 2^(k/12) m <= Z < 2^((k+1)/12) m),
 * with the sums that the usable range (src/stats/usable-range.ts) and the report's
 * depth-error chart need. Bins are the same for every pair, so profiles add up over
 * pairs. Per bin:
 * - pixels: pixels with a true depth;
 * - bad1, bad2, bad5: those with no valid positive predicted depth or a relative depth
 *   error above 1 %, 2 %, 5 % (the depth_over rates);
 * - count, rel, absDz: pixels with a valid positive predicted depth, the sum of their
 *   relative depth errors and of their |Zp - Zt| in metres;
 * - expect: over the same pixels, the sum of Zt^2 / (f B) (metres per pixel): a disparity
 *   error of delta px moves the depth by about delta * Zt^2 / (f B) (from Z = fB/d, dZ/dd
 *   = -Z^2/(fB)), so delta * expect / count is the mean depth error delta predicts.
 */
import { NO_DEPTH_BIN, type PatternTable, type RegionMap } from '../core/regions.js';

export interface DepthProfile {
  /** Fine bin index of the first entry. */
  first: number;
  pixels: number[];
  bad1: number[];
  bad2: number[];
  bad5: number[];
  count: number[];
  rel: number[];
  absDz: number[];
  expect: number[];
}

export const PROFILE_FIELDS = ['pixels', 'bad1', 'bad2', 'bad5', 'count', 'rel', 'absDz', 'expect'] as const;
const F = PROFILE_FIELDS.length;

/** Accumulates per pattern and fine bin during the scorer's pixel pass. */
export class DepthProfiler {
  private readonly lo: number;
  private readonly nb: number;
  private readonly acc: Float64Array;
  private readonly zbin: Int16Array;

  constructor(
    private readonly map: RegionMap,
    private readonly table: PatternTable,
  ) {
    const zbin = map.zbin;
    if (!zbin) throw new RangeError('DepthProfiler: the map has no depth bins');
    this.zbin = zbin;
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = 0; i < zbin.length; i++) {
      const k = zbin[i];
      if (k === NO_DEPTH_BIN) continue;
      if (k < lo) lo = k;
      if (k > hi) hi = k;
    }
    this.lo = lo === Infinity ? 0 : lo;
    this.nb = lo === Infinity ? 0 : hi - lo + 1;
    this.acc = new Float64Array(table.count * this.nb * F);
  }

  private at(i: number, b: number): number {
    return (b * this.nb + this.zbin[i] - this.lo) * F;
  }

  /** A pixel with a true depth and no valid positive predicted depth. */
  truthOnly(i: number, b: number): void {
    if (this.zbin[i] === NO_DEPTH_BIN) return;
    const o = this.at(i, b);
    const a = this.acc;
    a[o]++;
    a[o + 1]++;
    a[o + 2]++;
    a[o + 3]++;
  }

  /** A pixel with a predicted depth: its relative error, |dZ| (m) and Zt^2 / (fB). */
  add(i: number, b: number, rel: number, absDz: number, zt2OverFb: number): void {
    if (this.zbin[i] === NO_DEPTH_BIN) return;
    const o = this.at(i, b);
    const a = this.acc;
    a[o]++;
    if (rel > 0.01) a[o + 1]++;
    if (rel > 0.02) a[o + 2]++;
    if (rel > 0.05) a[o + 3]++;
    a[o + 4]++;
    a[o + 5] += rel;
    a[o + 6] += absDz;
    a[o + 7] += zt2OverFb;
  }

  /** One profile per region of the map (bit order), trimmed to its non-empty bins; null for an empty one. */
  byRegion(): (DepthProfile | null)[] {
    const t = this.table;
    return this.map.names.map((_, r) => {
      const sum = new Float64Array(this.nb * F);
      for (let b = 1; b < t.count; b++) {
        if (((t.bits[b] >> r) & 1) === 0) continue;
        const base = b * this.nb * F;
        for (let j = 0; j < this.nb * F; j++) sum[j] += this.acc[base + j];
      }
      let first = -1;
      let last = -1;
      for (let k = 0; k < this.nb; k++) {
        if (sum[k * F] > 0) {
          if (first < 0) first = k;
          last = k;
        }
      }
      if (first < 0) return null;
      const prof = { first: this.lo + first } as DepthProfile;
      PROFILE_FIELDS.forEach((f, j) => {
        const xs: number[] = [];
        for (let k = first; k <= last; k++) xs.push(sum[k * F + j]);
        prof[f] = xs;
      });
      return prof;
    });
  }
}

/** a + b bin by bin (pooling over pairs); either may be undefined. */
export function addProfiles(a: DepthProfile | undefined, b: DepthProfile | undefined): DepthProfile | undefined {
  if (!a) return b;
  if (!b) return a;
  const first = Math.min(a.first, b.first);
  const last = Math.max(a.first + a.pixels.length, b.first + b.pixels.length);
  const out = { first } as DepthProfile;
  for (const f of PROFILE_FIELDS) {
    const xs = new Array<number>(last - first).fill(0);
    a[f].forEach((v, k) => (xs[a.first - first + k] += v));
    b[f].forEach((v, k) => (xs[b.first - first + k] += v));
    out[f] = xs;
  }
  return out;
}

/** The near edge of fine bin k, metres. */
export function binStart(k: number, perOctave: number): number {
  return 2 ** (k / perOctave);
}
