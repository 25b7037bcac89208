/**
 * The report's view model: the data object embedded in the page (summary figures per
 * dataset, tag and region, the metric catalogue's units and directions, colour scales)
 * and one view per pair (thumbnails as data: URIs, exact per-pair figures).
 */
import { conditionOf, CONDITION_KINDS, configLabel, parseConditionName } from '../../conditions/spec.js';
import { breakingPoints, breakingRuleText, defaultBreakingRule, parseBreakingRule } from '../../stats/breaking.js';
import type { JobResult, RegionFigures } from '../../core/score.js';
import { ALL_BANDS, REGION_IDS, sliceKey } from '../../core/regions.js';
import { PROFILE_BINS_PER_OCTAVE } from '../../core/depth-bands.js';
import { addProfiles, binStart, type DepthProfile } from '../../metrics/depth-profile.js';
import { DEFAULT_USABLE_RULE, USABLE_MIN_PIXELS, usableRuleText } from '../../stats/usable-range.js';
import type { RunRecord } from '../../io/run-record.js';
import type { Manifest } from '../../dataset/manifest.js';
import type { SummaryRow } from '../../stats/aggregate.js';
import { DEFAULT_LEVEL } from '../../stats/bootstrap.js';
import { heading, keyThreshold, metricsOf, thresholdName, type MetricSet } from '../../metrics/catalogue.js';
import { SPARSIFY_SHARES } from '../../metrics/sparsify.js';
import { CATEGORICAL, colorHex, ERROR_MAP, type DisparityMapName } from '../colormaps.js';
import { encodePalettePng, type IndexedImage } from '../png-palette.js';
import { ERROR_CLIP_PX, NO_TRUTH, REGION_COLORS, colorizeDisparity, colorizeError, colorizeRegions, finiteRange, toThumbGrid } from '../thumbs.js';
import { pairThumbsFromDataset, type PairInputs } from './inputs.js';

/** The views' shapes are declared once for the server and the client: src/report/client/report-data.d.ts. */
export type PairView = PlxPairView;
type PairJobView = PlxPairJobView;
type FigureView = PlxFigureView;

function indexedUri(img: IndexedImage): string {
  return `data:image/png;base64,${encodePalettePng(img).toString('base64')}`;
}

function pngBytesUri(png: Uint8Array): string {
  return `data:image/png;base64,${Buffer.from(png.buffer, png.byteOffset, png.byteLength).toString('base64')}`;
}

function figView(f: RegionFigures, rateMap: number[]): FigureView {
  return { coverage: f.coverage, epe: f.epe, rates: rateMap.map((k) => (k >= 0 ? (f.rates[k] ?? null) : null)) };
}

/** What one pair view is drawn from. */
export interface PairViewInput {
  runDir: string;
  info: RunRecord;
  manifest: Manifest | null;
  dataset: string;
  pair: string;
  jobs: JobResult[];
  thresholds: readonly number[];
  inputs: PairInputs;
  disparityMap: DisparityMapName;
  /** Store pair thumbnails made from the dataset for the next report. */
  storePairThumbs: boolean;
}

export async function pairView(p: PairViewInput): Promise<PairView> {
  const { inputs, dataset, pair } = p;
  const view: PairView = { dataset, pair, scale: null, size: null, left: null, truth: null, regions: null, note: inputs.problem, jobs: [] };
  const t = inputs.truth;
  const map = p.disparityMap;
  if (t && p.manifest) {
    const [lo, hi] = finiteRange(t.thumb.data);
    if (Number.isFinite(lo)) view.scale = [lo, hi];
    view.size = [t.thumb.width, t.thumb.height];
    view.truth = indexedUri(colorizeDisparity(t.thumb, lo, hi, map, 'no-truth'));
    try {
      const thumbs = inputs.stored ?? (inputs.dataset ? await pairThumbsFromDataset(p.runDir, p.info, inputs.dataset, { dataset, pair, factor: t.f, store: p.storePairThumbs }) : null);
      if (!thumbs) throw new Error('no left image');
      view.left = pngBytesUri(thumbs.leftPng);
      view.regions = indexedUri(colorizeRegions(thumbs.regionBits, t.thumb.width, t.thumb.height));
    } catch (e) {
      view.note = `Dataset images not shown: ${(e as Error).message}`;
    }
  }
  p.jobs.forEach((j, k) => {
    const rateMap = p.thresholds.map((th) => j.thresholds.indexOf(th));
    const jv: PairJobView = {
      label: configLabel(j),
      status: j.status,
      error: j.error ?? null,
      time_ms: j.time_ms,
      disp: null,
      err: null,
      fig: { known: figView(j.scores.known.figures, rateMap), visible: figView(j.scores.visible.figures, rateMap) },
    };
    const prev = inputs.previews[k];
    if (t && prev && j.status === 'ok') {
      const pThumb = toThumbGrid(prev, t.pf, t.width, t.height, t.f);
      if (pThumb.width === t.thumb.width && pThumb.height === t.thumb.height) {
        jv.disp = indexedUri(colorizeDisparity(pThumb, view.scale ? view.scale[0] : 0, view.scale ? view.scale[1] : 1, map));
        jv.err = indexedUri(colorizeError(pThumb, t.thumb, ERROR_CLIP_PX));
      }
    }
    view.jobs.push(jv);
  });
  return view;
}

/** summary[dataset][tag or ''][slice key: region, or region@band] = rows (one per configuration). */
function summaryView(rows: SummaryRow[], set: MetricSet): PlxReportHead['summary'] {
  const out: PlxReportHead['summary'] = {};
  const metrics = metricsOf(set);
  for (const r of rows) {
    const ds = (out[r.dataset] ??= {});
    const tg = (ds[r.tag ?? ''] ??= {});
    const list = (tg[sliceKey(r.region, r.band)] ??= []);
    const m: Record<string, (number | null)[]> = {};
    for (const { id } of metrics) {
      const s = r.metrics[id];
      m[id] = [s.mean, s.meanCi?.lo ?? null, s.meanCi?.hi ?? null, s.n, s.pooled, s.pooledCi?.lo ?? null, s.pooledCi?.hi ?? null, s.detect];
    }
    const u = r.usable;
    const usable: PlxSummaryRow['usable'] = u ? [u.range_m, u.ci?.lo ?? null, u.ci?.hi ?? null, u.holds] : null;
    list.push({ label: configLabel(r), n_pairs: r.n_pairs, n_units: r.n_units, unit: r.unit, n_failed: r.n_failed, m, usable });
  }
  return out;
}

/**
 * Mean sparsification curves over pairs, per dataset, region and configuration (untagged;
 * only jobs with a confidence map have curves), in the order of `configs`.
 */
export function sparsifyView(jobs: readonly JobResult[], configs: readonly string[]): PlxReportHead['sparsify'] {
  const out: PlxReportHead['sparsify'] = {};
  for (const region of regionNamesOf(jobs)) {
    for (const label of configs) {
      const byDataset = new Map<string, { conf: number[]; oracle: number[]; n: number }>();
      for (const j of jobs) {
        if (configLabel(j) !== label) continue;
        const f = j.scores[region]?.figures;
        if (!f?.conf_curve || !f.oracle_curve) continue;
        const acc = byDataset.get(j.dataset) ?? { conf: f.conf_curve.map(() => 0), oracle: f.oracle_curve.map(() => 0), n: 0 };
        f.conf_curve.forEach((v, k) => (acc.conf[k] += v));
        f.oracle_curve.forEach((v, k) => (acc.oracle[k] += v));
        acc.n++;
        byDataset.set(j.dataset, acc);
      }
      for (const [dataset, acc] of byDataset) {
        ((out[dataset] ??= {})[region] ??= []).push({ label, pairs: acc.n, conf: acc.conf.map((v) => v / acc.n), oracle: acc.oracle.map((v) => v / acc.n) });
      }
    }
  }
  return out;
}

/** Sub-pixel figures per dataset, region and configuration: histogram summed, lock and errors averaged over pairs. */
export function subpixelView(jobs: readonly JobResult[], configs: readonly string[]): PlxReportHead['subpixel'] {
  const out: PlxReportHead['subpixel'] = {};
  for (const region of regionNamesOf(jobs)) {
    for (const label of configs) {
      const byDataset = new Map<string, { lock: number; n: number; hist: number[]; errSum: number[]; errN: number[] }>();
      for (const j of jobs) {
        const f = j.scores[region]?.figures;
        if (!f || configLabel(j) !== label || !f.frac_hist || !f.err_by_truth_frac || typeof f.subpix_lock !== 'number') continue;
        const acc = byDataset.get(j.dataset) ?? { lock: 0, n: 0, hist: f.frac_hist.map(() => 0), errSum: f.frac_hist.map(() => 0), errN: f.frac_hist.map(() => 0) };
        acc.lock += f.subpix_lock;
        acc.n++;
        f.frac_hist.forEach((c, k) => (acc.hist[k] += c));
        f.err_by_truth_frac.forEach((e, k) => {
          if (e === null) return;
          acc.errSum[k] += e;
          acc.errN[k]++;
        });
        byDataset.set(j.dataset, acc);
      }
      for (const [dataset, a] of byDataset) {
        ((out[dataset] ??= {})[region] ??= []).push({ label, lock: a.lock / a.n, hist: a.hist, err: a.errSum.map((e, k) => (a.errN[k] > 0 ? e / a.errN[k] : null)) });
      }
    }
  }
  return out;
}

/** Flicker against frame per dataset, region and configuration: the mean over the dataset's sequences at each frame. */
export function flickerView(jobs: readonly JobResult[], configs: readonly string[]): PlxReportHead['flicker'] {
  const out: PlxReportHead['flicker'] = {};
  for (const region of regionNamesOf(jobs)) {
    for (const label of configs) {
      const acc = new Map<string, Map<number, [number, number]>>(); // dataset -> frame -> [sum, count]
      for (const j of jobs) {
        const v = j.scores[region]?.figures.flicker;
        if (configLabel(j) !== label || j.frame === undefined || typeof v !== 'number') continue;
        const byFrame = acc.get(j.dataset) ?? new Map<number, [number, number]>();
        const cell = byFrame.get(j.frame) ?? [0, 0];
        cell[0] += v;
        cell[1]++;
        byFrame.set(j.frame, cell);
        acc.set(j.dataset, byFrame);
      }
      for (const [dataset, byFrame] of acc) {
        const points = [...byFrame].sort((a, b) => a[0] - b[0]).map(([f, [sum, n]]): [number, number] => [f, sum / n]);
        ((out[dataset] ??= {})[region] ??= []).push({ label, points });
      }
    }
  }
  return out;
}

/** The regions of the jobs: the built-in ones, then the named regions of the manifests, in first-seen order. */
export function regionNamesOf(jobs: readonly JobResult[]): string[] {
  const out = new Set<string>(REGION_IDS);
  for (const j of jobs) for (const r of j.regions ?? []) out.add(r);
  return [...out];
}

/** The depth bands of the summary rows, nearest first (as the rows give them). */
export function bandNamesOf(rows: readonly SummaryRow[]): string[] {
  const out = new Set<string>();
  for (const r of rows) if (r.band !== ALL_BANDS) out.add(r.band);
  return [...out];
}

/**
 * Depth error by distance per dataset, whole region and configuration (all pairs): the
 * depth profiles pooled over pairs; per fine bin its centre (m), the measured mean |dZ|
 * (m), and the mean Zt^2 / (f B) (m per px of disparity error), which the client
 * multiplies by the configuration's pooled epe and by 0.25 px for the expected curves.
 */
export function depthView(jobs: readonly JobResult[], configs: readonly string[]): PlxReportHead['depth'] {
  const out: PlxReportHead['depth'] = {};
  for (const region of regionNamesOf(jobs)) {
    for (const label of configs) {
      const acc = new Map<string, { prof: DepthProfile | undefined; sumAbs: number; valid: number }>();
      for (const j of jobs) {
        const sc = j.scores[region];
        if (configLabel(j) !== label || !sc?.profile) continue;
        const a = acc.get(j.dataset) ?? { prof: undefined, sumAbs: 0, valid: 0 };
        a.prof = addProfiles(a.prof, sc.profile);
        a.sumAbs += sc.sums.sumAbs;
        a.valid += sc.sums.valid;
        acc.set(j.dataset, a);
      }
      for (const [dataset, a] of acc) {
        const p = a.prof;
        if (!p) continue;
        const z: number[] = [];
        const measured: (number | null)[] = [];
        const perPx: (number | null)[] = [];
        p.count.forEach((c, k) => {
          if (p.pixels[k] < USABLE_MIN_PIXELS) return; // too few pixels to draw (the usable range does not judge them either)
          z.push(Math.sqrt(binStart(p.first + k, PROFILE_BINS_PER_OCTAVE) * binStart(p.first + k + 1, PROFILE_BINS_PER_OCTAVE)));
          measured.push(c > 0 ? p.absDz[k] / c : null);
          perPx.push(c > 0 ? p.expect[k] / c : null);
        });
        const pixels = p.pixels.filter((n) => n >= USABLE_MIN_PIXELS);
        if (z.length) ((out[dataset] ??= {})[region] ??= []).push({ label, epe: a.valid > 0 ? a.sumAbs / a.valid : null, z, measured, perPx, pixels });
      }
    }
  }
  return out;
}

/** The views of the page beside the summary. */
export type ReportViews = Pick<PlxReportHead, 'sparsify' | 'subpixel' | 'flicker' | 'depth' | 'regions' | 'bands' | 'conditions'>;

/** The report's view of the camera-fault conditions: labels, kinds present, breaking points (src/stats/breaking.ts). */
export function conditionsView(jobs: readonly JobResult[], set: MetricSet): PlxConditionsView {
  const seen = new Map<string, PlxConditionsView['labels'][number]>();
  for (const j of jobs) {
    const label = configLabel(j);
    if (seen.has(label)) continue;
    const c = parseConditionName(conditionOf(j));
    seen.set(label, { label, matcher: j.matcher, condition: conditionOf(j), kind: c?.kind ?? null, strength: c?.strength ?? null });
  }
  const labels = [...seen.values()];
  const present = new Set(labels.map((l) => l.kind));
  const kinds = CONDITION_KINDS.filter((k) => present.has(k.id)).map((k) => ({ id: k.id, unit: k.unit, what: k.what, neutral: k.neutral }));
  const ruleText = set.breakingPoint ?? defaultBreakingRule(set);
  const rule = parseBreakingRule(ruleText, set, 'breakingPoint');
  const breaking = kinds.length
    ? breakingPoints(jobs, set, rule).map((p) => ({ matcher: p.matcher, dataset: p.dataset, kind: p.kind, strength: p.strength, lo: p.lo, hi: p.hi, strongest: p.levels[p.levels.length - 1].strength, pairs: p.pairs }))
    : [];
  return { labels, kinds, rule: breakingRuleText(rule), breaking };
}

/** The page's data object, without its `pairs` (written one view at a time). */
export function reportData(
  rows: SummaryRow[],
  set: MetricSet,
  datasets: string[],
  configs: string[],
  disparityMap: DisparityMapName,
  views: ReportViews = { sparsify: {}, subpixel: {}, flicker: {}, depth: {}, regions: [...REGION_IDS], bands: [], conditions: { labels: [], kinds: [], rule: '', breaking: [] } },
): PlxReportHead {
  const metrics = metricsOf(set);
  const byId = <T>(f: (m: (typeof metrics)[number]) => T): Record<string, T> => Object.fromEntries(metrics.map((m) => [m.id, f(m)]));
  return {
    thresholds: [...set.thresholds],
    rateNames: set.thresholds.map(thresholdName),
    regions: views.regions,
    bands: views.bands,
    usableRule: set.usableRange ?? usableRuleText(DEFAULT_USABLE_RULE),
    metrics: metrics.map((m) => m.id),
    units: byId((m) => (m.unit === 'fraction' ? '' : m.unit)),
    headings: byId(heading),
    better: byId((m): 'lower' | 'higher' | 'abs' => (m.better === 'higher' ? 'higher' : m.better === 'abs-lower' ? 'abs' : 'lower')),
    pooled: byId((m) => m.pool !== null),
    level: DEFAULT_LEVEL,
    datasets,
    configs,
    summary: summaryView(rows, set),
    dispMap: disparityMap,
    dispColors: Array.from({ length: 33 }, (_, i) => colorHex(disparityMap, i / 32)),
    errMap: ERROR_MAP,
    errColors: Array.from({ length: 33 }, (_, i) => colorHex(ERROR_MAP, i / 32)),
    errorClip: ERROR_CLIP_PX,
    noTruth: `rgb(${NO_TRUTH.join(',')})`,
    configColors: [...CATEGORICAL],
    rankBy: thresholdName(keyThreshold(set.thresholds)),
    shares: [...SPARSIFY_SHARES],
    sparsify: views.sparsify,
    subpixel: views.subpixel,
    flicker: views.flicker,
    depth: views.depth,
    conditions: views.conditions,
    regionKeys: (['visible', 'occluded', 'flat', 'jump', 'unknown'] as const).map((k): [string, string] => [k === 'unknown' ? 'no truth' : k, `rgb(${REGION_COLORS[k].join(',')})`]),
  };
}
