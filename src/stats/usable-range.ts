/**
 * The usable range: the largest distance up to which a depth figure stays within a
 * limit, "within 5 % up to 3.4 m [3.1, 3.8]".
 *
 * Definition. The pixels of a cell (configuration, dataset, region; band `all`) with a
 * true depth are pooled over its pairs in the fine distance bins of the depth profile
 * (src/metrics/depth-profile.ts: 12 per doubling, bin k holds 2^(k/12) <= Z < 2^((k+1)/12) m).
 * Bins with fewer than USABLE_MIN_PIXELS pooled pixels neither pass nor fail (too few to
 * judge). Walking from the nearest bin outwards, the figure of each remaining bin is
 * compared with the limit:
 * - depth_over1pct / depth_over2pct / depth_over5pct: 100 * bad / pixels (%, a pixel
 *   without a valid positive predicted depth counts as bad, as in the tables);
 * - depth_relerr: the mean relative depth error of the bin's pixels with a predicted
 *   depth (fraction); a bin where none has one fails.
 * The range R is the near edge of the first bin whose figure exceeds the limit
 * (`holds: 'to'`). When the nearest judged bin already fails, R is that bin's near edge
 * and `holds: 'nowhere'`; when no bin fails, R is the far edge of the farthest judged
 * bin and `holds: 'beyond'` (the data end before the figure breaks).
 * The interval is the BCa bootstrap of R (bootstrap.ts) resampling the cell's units
 * (pairs, or the manifest's groups), the profiles of each resample pooled anew.
 */
import type { JobResult } from '../core/score.js';
import { PROFILE_BINS_PER_OCTAVE } from '../core/depth-bands.js';
import { UsageError } from '../core/errors.js';
import type { DepthProfile } from '../metrics/depth-profile.js';
import { binStart } from '../metrics/depth-profile.js';
import { bcaIntervals, type BootstrapOptions, type Interval } from './bootstrap.js';

/** Figures a usable range can be judged by. */
export const USABLE_FIGURES = ['depth_over1pct', 'depth_over2pct', 'depth_over5pct', 'depth_relerr'] as const;
export type UsableFigure = (typeof USABLE_FIGURES)[number];

export interface UsableRule {
  metric: UsableFigure;
  /** The figure must stay <= this (in the figure's unit: % for the rates, a fraction for depth_relerr). */
  limit: number;
}

/** The default rule: at most 10 % of the pixels off by more than 5 % of their depth. */
export const DEFAULT_USABLE_RULE: UsableRule = { metric: 'depth_over5pct', limit: 10 };

/** Fewer pooled pixels than this in a fine bin: the bin is not judged. */
export const USABLE_MIN_PIXELS = 100;

export interface UsableRange {
  rule: UsableRule;
  /** R in metres (see the file comment). */
  range_m: number;
  holds: 'to' | 'beyond' | 'nowhere';
  /** Near edge of the nearest and far edge of the farthest judged bin (m). */
  from_m: number;
  to_m: number;
  /** BCa interval of R over the cell's units; null when not computed or fewer than two units. */
  ci: Interval | null;
}

/** `depth_over5pct<=10` as a rule; a UsageError naming `option` otherwise. */
export function parseUsableRule(text: string, option = '--usable-range'): UsableRule {
  const m = /^\s*([a-z0-9_]+)\s*<=\s*([0-9]*\.?[0-9]+(?:e[-+]?\d+)?)\s*$/i.exec(text);
  if (!m) throw new UsageError(option, `"${text}" must read <figure><=<limit>, e.g. depth_over5pct<=10`);
  const metric = m[1] as UsableFigure;
  if (!(USABLE_FIGURES as readonly string[]).includes(metric)) throw new UsageError(option, `"${m[1]}" is not one of ${USABLE_FIGURES.join(', ')}`);
  const limit = Number(m[2]);
  if (!(limit >= 0) || !Number.isFinite(limit)) throw new UsageError(option, `limit "${m[2]}" must be a number >= 0`);
  return { metric, limit };
}

/** The rule as text, the inverse of parseUsableRule. */
export function usableRuleText(r: UsableRule): string {
  return `${r.metric}<=${String(r.limit)}`;
}

/** Numerator and denominator fields of the profile for a figure, and its scale. */
function figureFields(metric: UsableFigure): { num: keyof DepthProfile; den: keyof DepthProfile; scale: number } {
  if (metric === 'depth_relerr') return { num: 'rel', den: 'count', scale: 1 };
  const k = metric === 'depth_over1pct' ? 'bad1' : metric === 'depth_over2pct' ? 'bad2' : 'bad5';
  return { num: k, den: 'pixels', scale: 100 };
}

/**
 * R from pooled bins: per bin k (from bin index `first`), pixels[k], num[k], den[k].
 * Returns [R, holds code (0 to, 1 beyond, 2 nowhere), from, to] or null when no bin is judged.
 */
function rangeOfBins(first: number, nb: number, get: (k: number, field: 0 | 1 | 2) => number, rule: UsableRule, scale: number): [number, number, number, number] | null {
  let from = NaN;
  let lastJudged = -1;
  for (let k = 0; k < nb; k++) {
    const pixels = get(k, 0);
    if (pixels < USABLE_MIN_PIXELS) continue;
    const edge = binStart(first + k, PROFILE_BINS_PER_OCTAVE);
    if (Number.isNaN(from)) from = edge;
    const den = get(k, 2);
    const figure = den > 0 ? (scale * get(k, 1)) / den : Infinity;
    if (figure > rule.limit) return [edge, lastJudged < 0 ? 2 : 0, from, edge];
    lastJudged = k;
  }
  if (lastJudged < 0) return null;
  const far = binStart(first + lastJudged + 1, PROFILE_BINS_PER_OCTAVE);
  return [far, 1, from, far];
}

const HOLDS = ['to', 'beyond', 'nowhere'] as const;

/**
 * The usable range of one cell from its jobs' profiles of slice `key` (a whole region);
 * null when no job has a profile or no bin holds enough pixels.
 */
export function usableRangeOf(jobs: readonly JobResult[], key: string, rule: UsableRule, opts: { byGroup: boolean; ci: BootstrapOptions | false }): UsableRange | null {
  const profiles: { unit: string; p: DepthProfile }[] = [];
  for (const j of jobs) {
    const p = j.scores[key]?.profile;
    if (p && p.pixels.length) profiles.push({ unit: opts.byGroup && j.group !== undefined ? `group:${j.group}` : `pair:${j.dataset}/${j.pair}`, p });
  }
  if (!profiles.length) return null;
  const first = Math.min(...profiles.map((x) => x.p.first));
  const nb = Math.max(...profiles.map((x) => x.p.first + x.p.pixels.length)) - first;
  const units = [...new Set(profiles.map((x) => x.unit))];
  const unitIndex = new Map(units.map((u, i) => [u, i]));
  const { num, den, scale } = figureFields(rule.metric);
  const cols = 3 * nb;
  const data = new Float64Array(units.length * cols);
  for (const { unit, p } of profiles) {
    const base = unitIndex.get(unit)! * cols;
    const off = p.first - first;
    const n = p[num] as number[];
    const d = p[den] as number[];
    p.pixels.forEach((px, k) => {
      const c = base + 3 * (off + k);
      data[c] += px;
      data[c + 1] += n[k];
      data[c + 2] += d[k];
    });
  }
  const fromTotals = (t: Float64Array): [number, number, number, number] | null => rangeOfBins(first, nb, (k, f) => t[3 * k + f], rule, scale);
  const tot = new Float64Array(cols);
  for (let u = 0; u < units.length; u++) for (let c = 0; c < cols; c++) tot[c] += data[u * cols + c];
  const r = fromTotals(tot);
  if (!r) return null;
  const ci = opts.ci === false ? null : bcaIntervals({ units: units.length, cols, data }, [(t) => fromTotals(t)?.[0] ?? NaN], opts.ci)[0];
  return { rule, range_m: r[0], holds: HOLDS[r[1]], from_m: r[2], to_m: r[3], ci };
}

/** The console cell: `3.40 [3.10, 3.80]`, `>12.3` (holds beyond), `<2.00` (fails at the nearest). */
export function usableCell(u: UsableRange): string {
  const n = (x: number): string => (x < 10 ? x.toFixed(2) : x.toFixed(1));
  const mark = u.holds === 'beyond' ? '>' : u.holds === 'nowhere' ? '<' : '';
  return `${mark}${n(u.range_m)}${u.ci ? ` [${n(u.ci.lo)}, ${n(u.ci.hi)}]` : ''}`;
}
