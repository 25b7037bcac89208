/**
 * Breaking points: for each configuration, dataset and condition kind, the weakest
 * strength at which a chosen figure worsens by more than a chosen amount over `clean`.
 *
 * Rule `region/metric:amount` (the gate syntax, e.g. `visible/over2px:5`: the visible
 * region's over2px rate rises by more than 5 percentage points). Per level, the
 * worsening is the mean over pairs of the paired change (level minus clean, sign
 * turned so that worse is positive; the figures as compare.ts takes them). Levels are
 * taken from weak to strong (spec.ts severity); the breaking point is the first level
 * whose worsening exceeds the amount, or none ("beyond" the strongest level tried).
 * Its interval: pairs are resampled (1000 draws, seeded) and the breaking level found
 * again in each draw; the 2.5th and 97.5th percentiles of those levels (as strengths,
 * null = beyond the strongest) bound it.
 */
import { ALL_BANDS, sliceKey } from '../core/regions.js';
import type { JobResult } from '../core/score.js';
import { CLEAN, conditionKind, conditionOf, parseConditionName, CONDITION_KINDS } from '../conditions/spec.js';
import { findMetric, keyThreshold, levelMapOf, worseningSign, type LevelMap, type MetricSet } from '../metrics/catalogue.js';
import { thresholdName } from '../metrics/types.js';
import { byNatural, byCodeUnits } from '../core/order.js';
import { parseGate } from './gates.js';
import { comparedValue } from './compare.js';
import { latestJobs } from './aggregate.js';
import { createPrng } from './prng.js';

export interface BreakingRule {
  region: string;
  band: string;
  metric: string;
  /** Worsening beyond which a level breaks, in the metric's unit (percentage points for rates). */
  amount: number;
}

/** The default rule: the visible region's key bad-pixel rate rises by more than 5 percentage points. */
export function defaultBreakingRule(set: MetricSet): string {
  return `visible/${thresholdName(keyThreshold(set.thresholds))}:5`;
}

/** Parse `region/metric:amount`; errors name `option`. */
export function parseBreakingRule(text: string, set: MetricSet, option = '--breaking-point'): BreakingRule {
  const g = parseGate(text, set, option);
  return { region: g.region, band: g.band, metric: g.metric, amount: g.allowance };
}

export function breakingRuleText(r: BreakingRule): string {
  return `${r.band === ALL_BANDS ? r.region : `${r.region}@${r.band}`}/${r.metric}:${r.amount}`;
}

export interface BreakingLevel {
  condition: string;
  strength: number;
  /** Mean paired worsening over clean (positive = worse); null when no pair has the figure under both. */
  worsening: number | null;
  /** Pairs with the figure under both. */
  pairs: number;
}

export interface BreakingPoint {
  matcher: string;
  dataset: string;
  kind: string;
  rule: BreakingRule;
  /** From weak to strong. */
  levels: BreakingLevel[];
  /** The weakest breaking strength; null = no level tried breaks. */
  strength: number | null;
  /** Interval of the breaking strength over pairs; null bound = beyond the strongest level tried. */
  lo: number | null;
  hi: number | null;
  pairs: number;
}

const RESAMPLES = 1000;
const SEED = 7331;

/** Per pair (rows) and level (columns): the worsening over clean, NaN where either figure is missing. */
function worseningMatrix(clean: Map<string, JobResult>, levels: Map<string, JobResult>[], rule: BreakingRule, set: MetricSet): { pairs: string[]; w: Float64Array } {
  const metric = findMetric(set, rule.metric)!;
  const sign = worseningSign(metric);
  const key = sliceKey(rule.region, rule.band);
  const pairs = [...clean.keys()].sort(byCodeUnits);
  const w = new Float64Array(pairs.length * levels.length).fill(NaN);
  const value = (j: JobResult | undefined): number | null => {
    if (!j) return null;
    const lv: LevelMap = levelMapOf(j, set);
    if (lv.rate.includes(-1) || lv.quantile.includes(-1)) return null;
    return lv ? comparedValue(j, key, metric, lv) : null;
  };
  pairs.forEach((p, i) => {
    const base = value(clean.get(p));
    if (base === null) return;
    levels.forEach((lv, k) => {
      const v = value(lv.get(p));
      if (v !== null) w[i * levels.length + k] = sign * (v - base);
    });
  });
  return { pairs, w };
}

/** The first level (index) whose mean worsening over the drawn rows exceeds `amount`; `L` when none. */
function breakingIndex(w: Float64Array, L: number, rows: ArrayLike<number>, amount: number, means?: (number | null)[], counts?: number[]): number {
  let first = L;
  for (let k = 0; k < L; k++) {
    let s = 0;
    let n = 0;
    for (let r = 0; r < rows.length; r++) {
      const v = w[rows[r] * L + k];
      if (!Number.isNaN(v)) {
        s += v;
        n++;
      }
    }
    const mean = n ? s / n : null;
    if (means) means[k] = mean;
    if (counts) counts[k] = n;
    if (first === L && mean !== null && mean > amount) {
      first = k;
      if (!means) break;
    }
  }
  return first;
}

function pointOf(matcher: string, dataset: string, kind: string, jobs: readonly JobResult[], rule: BreakingRule, set: MetricSet): BreakingPoint | null {
  const byCondition = new Map<string, Map<string, JobResult>>();
  for (const j of jobs) {
    const c = conditionOf(j);
    if (c !== CLEAN && parseConditionName(c)?.kind !== kind) continue;
    let m = byCondition.get(c);
    if (!m) byCondition.set(c, (m = new Map()));
    m.set(j.pair, j);
  }
  const clean = byCondition.get(CLEAN);
  const k = conditionKind(kind)!;
  const names = [...byCondition.keys()].filter((c) => c !== CLEAN).map((c) => parseConditionName(c)!).sort((a, b) => k.severity(a.strength) - k.severity(b.strength) || a.strength - b.strength);
  if (!clean || !names.length) return null;
  const L = names.length;
  const { pairs, w } = worseningMatrix(clean, names.map((n) => byCondition.get(n.name)!), rule, set);
  const all = Int32Array.from(pairs, (_, i) => i);
  const means: (number | null)[] = new Array<number | null>(L).fill(null);
  const counts: number[] = new Array<number>(L).fill(0);
  const at = breakingIndex(w, L, all, rule.amount, means, counts);
  const strengthAt = (i: number): number | null => (i < L ? names[i].strength : null);
  let lo: number | null = null;
  let hi: number | null = null;
  if (pairs.length >= 2) {
    const rng = createPrng(SEED);
    const found = new Int32Array(RESAMPLES);
    const rows = new Int32Array(pairs.length);
    for (let b = 0; b < RESAMPLES; b++) {
      for (let r = 0; r < rows.length; r++) rows[r] = rng.int(pairs.length);
      found[b] = breakingIndex(w, L, rows, rule.amount);
    }
    found.sort();
    lo = strengthAt(found[Math.floor(0.025 * (RESAMPLES - 1))]);
    hi = strengthAt(found[Math.ceil(0.975 * (RESAMPLES - 1))]);
  }
  return {
    matcher,
    dataset,
    kind,
    rule,
    levels: names.map((n, i) => ({ condition: n.name, strength: n.strength, worsening: means[i], pairs: counts[i] })),
    strength: strengthAt(at),
    lo,
    hi,
    pairs: pairs.length,
  };
}

/** Every configuration's breaking point per dataset and condition kind the jobs hold, in table order. */
export function breakingPoints(results: readonly JobResult[], set: MetricSet, rule: BreakingRule): BreakingPoint[] {
  const jobs = latestJobs(results);
  const cells = new Map<string, JobResult[]>();
  for (const j of jobs) {
    const key = `${j.matcher}\u0000${j.dataset}`;
    const list = cells.get(key);
    if (list) list.push(j);
    else cells.set(key, [j]);
  }
  const out: BreakingPoint[] = [];
  const keys = [...cells.keys()].sort((a, b) => {
    const [ma, da] = a.split('\u0000') as [string, string];
    const [mb, db] = b.split('\u0000') as [string, string];
    return byNatural(ma, mb) || byCodeUnits(da, db);
  });
  for (const key of keys) {
    const list = cells.get(key)!;
    const kinds = new Set(list.map((j) => parseConditionName(conditionOf(j))?.kind).filter((k): k is string => k !== undefined));
    for (const kind of CONDITION_KINDS.map((c) => c.id).filter((id) => kinds.has(id))) {
      const p = pointOf(list[0].matcher, list[0].dataset, kind, list, rule, set);
      if (p) out.push(p);
    }
  }
  return out;
}

/** The breaking strength as a table cell: `4`, or `beyond 8` when no level tried (up to the strongest, 8) breaks. */
export function breakingCell(p: Pick<BreakingPoint, 'strength' | 'levels'>): string {
  return p.strength !== null ? String(p.strength) : `beyond ${String(p.levels[p.levels.length - 1]?.strength ?? '')}`;
}
