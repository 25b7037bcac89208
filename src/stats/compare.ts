/**
 * Paired comparison of two runs (baseline and candidate) on the pairs they share,
 * configuration by configuration (matched by label, the user's configuration name, or
 * paired explicitly), and the CI gates on top of it.
 *
 * Per (configuration, region, metric), over the pairs where both runs have the figure:
 *   d_i = candidate_i - baseline_i   (for bias: |candidate_i| - |baseline_i|, so a larger
 *                                     offset in either direction counts as worse)
 *   change = mean d_i, with a BCa interval (pairs, or the manifest's groups, resampled)
 *   p = sign-flip permutation test on the unit sums of d_i (see permutation.ts)
 *   worsening = change for lower-is-better metrics (errors, rates, quantiles, depth,
 *               time, memory, |bias|) and -change for coverage (higher is better).
 * A failed job is all-invalid in its sums and figures (coverage 0, rates 100), so both
 * runs are scored on the same pairs.
 */
import { conditionOf, configLabel } from '../conditions/spec.js';
import type { JobResult } from '../core/score.js';
import { type Slice } from '../core/regions.js';
import { detectability, type Detectability } from './power.js';
import { bcaIntervals, DEFAULT_LEVEL, type BootstrapOptions, type Interval, type TotalsStat } from './bootstrap.js';
import { signFlipTest, type SignFlipOptions } from './permutation.js';
import { measuredCost, metricsOf, metricValue, pooledFrom, readSums, sumColumnCount, worseningSign, findMetric, type LevelMap, type Metric, type MetricSet } from '../metrics/catalogue.js';
import { cmp, jobLevels, jobSlices, latestJobs, sortJobs } from './aggregate.js';
import { byNatural } from '../core/order.js';
import { metricSetOf, type RunConfigRecord, type RunRecord } from '../io/run-record.js';

/** The parts of a run record that compare reads. */
export interface RunInfoLike {
  name?: RunRecord['name'];
  config: Pick<RunConfigRecord, 'thresholds' | 'quantiles' | 'regions' | 'datasets'>;
}

export interface RunData {
  dir: string;
  info: RunInfoLike;
  results: JobResult[];
}

/** Reasons two runs cannot be compared (empty = comparable). */
export function comparabilityProblems(base: RunInfoLike, cand: RunInfoLike): string[] {
  const out: string[] = [];
  const tb = base.config.thresholds;
  const tc = cand.config.thresholds;
  if (tb.length !== tc.length || tb.some((t, i) => t !== tc[i])) out.push(`thresholds differ (baseline ${tb.join(', ')}; candidate ${tc.join(', ')})`);
  const qb = base.config.quantiles;
  const qc = cand.config.quantiles;
  if (qb.length !== qc.length || qb.some((q, i) => q !== qc[i])) out.push(`quantile levels differ (baseline ${qb.join(', ')}; candidate ${qc.join(', ')})`);
  const keys = [...new Set([...Object.keys(base.config.regions), ...Object.keys(cand.config.regions)])].sort(cmp);
  for (const k of keys) {
    if (base.config.regions[k] !== cand.config.regions[k]) out.push(`region parameter ${k} differs (baseline ${String(base.config.regions[k])}; candidate ${String(cand.config.regions[k])})`);
  }
  const hb = new Map(base.config.datasets.map((d) => [d.name, d.hash]));
  const hc = new Map(cand.config.datasets.map((d) => [d.name, d.hash]));
  for (const [name, h] of hb) {
    if (!hc.has(name)) out.push(`dataset ${name} is only in the baseline`);
    else if (hc.get(name) !== h) out.push(`dataset ${name} differs (hash ${h.slice(0, 12)} vs ${hc.get(name)!.slice(0, 12)})`);
  }
  for (const name of hc.keys()) if (!hb.has(name)) out.push(`dataset ${name} is only in the candidate`);
  return out;
}

export interface MetricDelta {
  region: string;
  /** `all` for the whole region, else a depth band's label. */
  band: string;
  metric: string;
  /** Means over the compared pairs. For bias these are mean |bias|. */
  base: number | null;
  cand: number | null;
  /** Mean of d_i (see module comment). */
  change: number | null;
  changeCi: Interval | null;
  /** Worsening (positive = worse) and its interval. */
  worsening: number | null;
  worseningCi: { lo: number; hi: number } | null;
  p: number | null;
  exactP: boolean;
  /** Pairs used (both figures present) and resampled units. */
  n: number;
  units: number;
  unit: 'pair' | 'group';
  /** Pooled figures on the compared pairs (no pooled quantiles or cost). */
  pooledBase: number | null;
  pooledCand: number | null;
  /** The smallest change these units can tell from noise (power.ts), from the spread of the per-unit mean differences. */
  detect: Detectability | null;
}

export interface PairChange {
  dataset: string;
  pair: string;
  base: number | null;
  cand: number | null;
  change: number;
  baseStatus: 'ok' | 'failed';
  candStatus: 'ok' | 'failed';
  /** The failed side's one-line message. */
  baseError?: string;
  candError?: string;
}

export interface ConfigComparison {
  /** The candidate's label; `baseline → candidate` when an explicit pairing joined two labels. */
  label: string;
  baseLabel: string;
  candLabel: string;
  /** The camera-fault condition both sides ran under (`clean`, `noise=4`). */
  condition: string;
  pairs: number;
  deltas: MetricDelta[];
  /** Pairs that changed most on the headline region/metric, largest |change| first. */
  topChanges: PairChange[];
  /** Pairs whose status differs (ok -> failed or back). */
  statusChanges: PairChange[];
}

export interface Comparison {
  thresholds: number[];
  quantiles: number[];
  configs: ConfigComparison[];
  configsOnlyInBase: string[];
  configsOnlyInCand: string[];
  /** `label: dataset/pair` entries present in one run only (configs in common). */
  pairsOnlyInBase: string[];
  pairsOnlyInCand: string[];
  headline: { region: string; metric: string };
  resamples: number;
  level: number;
}

export interface CompareOptions {
  bootstrap?: BootstrapOptions;
  permutation?: SignFlipOptions;
  /** Region and metric for the list of most-changed pairs (default known/epe). */
  headline?: { region: string; metric: string };
  /** How many most-changed pairs to list (default 5). */
  top?: number;
  /** Explicit pairings [baseline label, candidate label]; the other labels pair with themselves. */
  pairings?: readonly (readonly [string, string])[];
}

const key = (j: JobResult): string => `${j.dataset}/${j.pair}`;

function byLabel(results: JobResult[]): Map<string, Map<string, JobResult>> {
  const out = new Map<string, Map<string, JobResult>>();
  for (const j of sortJobs(latestJobs(results))) {
    const label = configLabel(j);
    let m = out.get(label);
    if (!m) out.set(label, (m = new Map()));
    m.set(key(j), j);
  }
  return out;
}

/** A job's figure as compared: null when empty; for bias its magnitude. */
export function comparedValue(j: JobResult, key: string, metric: Metric, levels: LevelMap): number | null {
  const s = j.scores[key];
  if (!s) return null;
  if (!metric.perJob && !(s.sums.pixels > 0)) return null;
  const v = metricValue(metric, s.figures, levels, measuredCost(j));
  if (v === null || !Number.isFinite(v)) return null;
  return metric.better === 'abs-lower' ? Math.abs(v) : v;
}

/** The pairs both runs have, in sorted order, with their level maps and resampling units. */
interface Paired {
  common: string[];
  base: JobResult[];
  cand: JobResult[];
  levelsB: LevelMap[];
  levelsC: LevelMap[];
  /** Unit index of each common pair (pair, or the manifest's group). */
  unitOf: number[];
  units: number;
  byGroup: boolean;
}

function pairUp(base: Map<string, JobResult>, cand: Map<string, JobResult>, set: MetricSet): Paired {
  const common = [...base.keys()].filter((k) => cand.has(k)).sort(cmp);
  const pairsB = common.map((k) => base.get(k)!);
  const pairsC = common.map((k) => cand.get(k)!);
  const byGroup = pairsC.some((j) => j.group !== undefined) || pairsB.some((j) => j.group !== undefined);
  const unitOf: number[] = [];
  const unitIds = new Map<string, number>();
  common.forEach((k, i) => {
    const g = pairsC[i].group ?? pairsB[i].group;
    const id = byGroup && g !== undefined ? `group:${g}` : `pair:${k}`;
    if (!unitIds.has(id)) unitIds.set(id, unitIds.size);
    unitOf.push(unitIds.get(id)!);
  });
  return {
    common,
    base: pairsB,
    cand: pairsC,
    levelsB: pairsB.map((j) => jobLevels(j, set)),
    levelsC: pairsC.map((j) => jobLevels(j, set)),
    unitOf,
    units: unitIds.size,
    byGroup,
  };
}

/** Every metric's paired change on one slice (see the module comment). */
function regionDeltas(p: Paired, slice: Slice, set: MetricSet, opts: CompareOptions): MetricDelta[] {
  const region = slice.key;
  const metrics = metricsOf(set);
  const M = metrics.length;
  const nSum = sumColumnCount(set);
  const U = p.units;
  const sums = new Float64Array(nSum);
  // Columns per metric: [sum d, count, sum base, sum cand]; then base sums, cand sums.
  const cols = 4 * M + 2 * nSum;
  const data = new Float64Array(U * cols);
  for (let i = 0; i < p.common.length; i++) {
    const row = p.unitOf[i] * cols;
    for (let m = 0; m < M; m++) {
      const b = comparedValue(p.base[i], region, metrics[m], p.levelsB[i]);
      const c = comparedValue(p.cand[i], region, metrics[m], p.levelsC[i]);
      if (b === null || c === null) continue;
      data[row + 4 * m] += c - b;
      data[row + 4 * m + 1] += 1;
      data[row + 4 * m + 2] += b;
      data[row + 4 * m + 3] += c;
    }
    const sb = p.base[i].scores[region];
    const sc = p.cand[i].scores[region];
    if (!sb || !sc) continue;
    readSums(sb.sums, p.levelsB[i], sums);
    for (let k = 0; k < nSum; k++) data[row + 4 * M + k] += sums[k];
    readSums(sc.sums, p.levelsC[i], sums);
    for (let k = 0; k < nSum; k++) data[row + 4 * M + nSum + k] += sums[k];
  }
  const stats: TotalsStat[] = metrics.map((_, m) => (t: Float64Array) => (t[4 * m + 1] > 0 ? t[4 * m] / t[4 * m + 1] : NaN));
  const cis = bcaIntervals({ units: U, cols, data }, stats, opts.bootstrap ?? {});
  const tot = new Float64Array(cols);
  for (let u = 0; u < U; u++) for (let c = 0; c < cols; c++) tot[c] += data[u * cols + c];
  return metrics.map((metric, m) => {
    const n = tot[4 * m + 1];
    const unitDiffs: number[] = [];
    const unitMeans: number[] = [];
    for (let u = 0; u < U; u++) {
      const count = data[u * cols + 4 * m + 1];
      if (count > 0) {
        unitDiffs.push(data[u * cols + 4 * m]);
        unitMeans.push(data[u * cols + 4 * m] / count);
      }
    }
    const perm = n > 0 ? signFlipTest(unitDiffs, opts.permutation ?? {}) : null;
    const change = n > 0 ? tot[4 * m] / n : null;
    const ci = cis[m] ?? null;
    const sign = worseningSign(metric);
    const pool = metric.pool;
    return {
      region: slice.region,
      band: slice.band,
      metric: metric.id,
      base: n > 0 ? tot[4 * m + 2] / n : null,
      cand: n > 0 ? tot[4 * m + 3] / n : null,
      change,
      changeCi: ci,
      worsening: change === null ? null : sign * change + 0,
      worseningCi: ci === null ? null : sign > 0 ? { lo: ci.lo, hi: ci.hi } : { lo: -ci.hi + 0, hi: -ci.lo + 0 },
      p: perm ? perm.p : null,
      exactP: perm ? perm.exact : true,
      n,
      units: unitDiffs.length,
      unit: p.byGroup ? 'group' : 'pair',
      pooledBase: pool ? pooledFrom(pool, tot, 4 * M) : null,
      pooledCand: pool ? pooledFrom(pool, tot, 4 * M + nSum) : null,
      detect: detectability(unitMeans, 1 - (opts.bootstrap?.level ?? DEFAULT_LEVEL)),
    };
  });
}

/** Pairs whose status changed, and those that changed most on the headline figure (largest worsening first). */
function pairChanges(p: Paired, set: MetricSet, opts: CompareOptions): { topChanges: PairChange[]; statusChanges: PairChange[] } {
  const hl = opts.headline ?? { region: 'known', metric: 'epe' };
  const hlMetric = findMetric(set, hl.metric);
  if (!hlMetric) throw new RangeError(`compare: headline metric ${hl.metric} is not in the metric set`);
  const changes: PairChange[] = [];
  const statusChanges: PairChange[] = [];
  for (let i = 0; i < p.common.length; i++) {
    const b = comparedValue(p.base[i], hl.region, hlMetric, p.levelsB[i]);
    const c = comparedValue(p.cand[i], hl.region, hlMetric, p.levelsC[i]);
    const pc: PairChange = {
      dataset: p.base[i].dataset,
      pair: p.base[i].pair,
      base: b,
      cand: c,
      change: b !== null && c !== null ? c - b : NaN,
      baseStatus: p.base[i].status,
      candStatus: p.cand[i].status,
      ...(p.base[i].error !== undefined ? { baseError: p.base[i].error } : {}),
      ...(p.cand[i].error !== undefined ? { candError: p.cand[i].error } : {}),
    };
    if (pc.baseStatus !== pc.candStatus) statusChanges.push(pc);
    if (Number.isFinite(pc.change) && pc.change !== 0) changes.push(pc);
  }
  const sign = worseningSign(hlMetric);
  // Largest worsening first, then largest improvement; ties by pair key.
  changes.sort((x, y) => Math.abs(y.change) - Math.abs(x.change) || sign * (y.change - x.change) || cmp(`${x.dataset}/${x.pair}`, `${y.dataset}/${y.pair}`));
  return { topChanges: changes.slice(0, opts.top ?? 5), statusChanges };
}

function compareConfig(
  labels: readonly [string, string],
  base: Map<string, JobResult>,
  cand: Map<string, JobResult>,
  set: MetricSet,
  opts: CompareOptions,
): ConfigComparison {
  const p = pairUp(base, cand, set);
  const deltas = jobSlices([...p.base, ...p.cand]).flatMap((slice) => regionDeltas(p, slice, set, opts));
  const [baseLabel, candLabel] = labels;
  const label = baseLabel === candLabel ? candLabel : `${baseLabel} → ${candLabel}`;
  // Both maps hold one configuration label, hence one condition; a label with jobs has at least one.
  const condition = conditionOf(cand.values().next().value!);
  return { label, baseLabel, candLabel, condition, pairs: p.common.length, deltas, ...pairChanges(p, set, opts) };
}

/** Configuration pairs to compare: the explicit pairings, then the labels both runs share, in natural order. */
export function matchConfigs(baseLabels: readonly string[], candLabels: readonly string[], pairings: readonly (readonly [string, string])[] = []): [string, string][] {
  const inB = new Set(baseLabels);
  const inC = new Set(candLabels);
  const usedB = new Set<string>();
  const usedC = new Set<string>();
  const out: [string, string][] = [];
  for (const [b, c] of pairings) {
    if (!inB.has(b) || !inC.has(c) || usedB.has(b) || usedC.has(c)) continue;
    out.push([b, c]);
    usedB.add(b);
    usedC.add(c);
  }
  for (const l of [...baseLabels].sort(byNatural)) {
    if (!usedB.has(l) && inC.has(l) && !usedC.has(l)) {
      out.push([l, l]);
      usedB.add(l);
      usedC.add(l);
    }
  }
  return out;
}

export function compareRuns(base: RunData, cand: RunData, opts: CompareOptions = {}): Comparison {
  const set = metricSetOf(cand.info);
  const thresholds = [...set.thresholds];
  const lb = byLabel(base.results);
  const lc = byLabel(cand.results);
  // An explicit pairing joins the two labels under every condition.
  const conditions = [...new Set([...base.results, ...cand.results].map(conditionOf))];
  const pairings = (opts.pairings ?? []).flatMap(([b, c]) => conditions.map((k): [string, string] => [configLabel({ matcher: b, condition: k }), configLabel({ matcher: c, condition: k })]));
  const matched = matchConfigs([...lb.keys()], [...lc.keys()], pairings);
  const usedB = new Set(matched.map(([b]) => b));
  const usedC = new Set(matched.map(([, c]) => c));
  const configsOnlyInBase = [...lb.keys()].filter((l) => !usedB.has(l)).sort(byNatural);
  const configsOnlyInCand = [...lc.keys()].filter((l) => !usedC.has(l)).sort(byNatural);
  const pairsOnlyInBase: string[] = [];
  const pairsOnlyInCand: string[] = [];
  for (const [b, c] of matched) {
    for (const k of lb.get(b)!.keys()) if (!lc.get(c)!.has(k)) pairsOnlyInBase.push(`${b}: ${k}`);
    for (const k of lc.get(c)!.keys()) if (!lb.get(b)!.has(k)) pairsOnlyInCand.push(`${c}: ${k}`);
  }
  const configs = matched.map((m) => compareConfig(m, lb.get(m[0])!, lc.get(m[1])!, set, opts));
  return {
    thresholds,
    quantiles: [...set.quantiles],
    configs,
    configsOnlyInBase,
    configsOnlyInCand,
    pairsOnlyInBase,
    pairsOnlyInCand,
    headline: opts.headline ?? { region: 'known', metric: 'epe' },
    resamples: opts.bootstrap?.resamples ?? 2000,
    level: opts.bootstrap?.level ?? 0.95,
  };
}
