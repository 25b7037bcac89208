/**
 * A pair whose files cannot be used (missing, truncated, a header that lies, sizes
 * that differ) does not end the run: every configuration of it is recorded as
 * `failed`, scored as all-invalid against whatever can still be read.
 *
 * - Truth readable: the regions come from the truth (known, visible, occluded, jump;
 *   the manifest's occlusion mask when it can be read at the truth's size, else the
 *   mask derived from the truth); `flat` needs the left image: it is built from the
 *   left luminance when the left image reads at the truth's size, and is empty
 *   (0 pixels) otherwise. Every pixel of a region then counts as a bad pixel
 *   (coverage 0, every rate 100 %, error figures empty), as for any failed job.
 * - Truth unreadable: the pair cannot be scored at all; every region has 0 pixels and
 *   empty figures, so the pair drops out of the means (n_pairs says so) and adds
 *   nothing to the pooled figures.
 */
import { CLEAN } from '../conditions/spec.js';
import type { FloatImage } from '../core/image.js';
import { toLuminance } from '../core/image.js';
import { pairFields, type PairEntry } from '../core/pair.js';
import { REGION_BIT, REGION_IDS, slicesOf, type RegionMap, type RegionParams } from '../core/regions.js';
import { bandLabels } from '../core/depth-bands.js';
import type { JobResult, PairScore } from '../core/score.js';
import { pairCamera, type Manifest } from '../dataset/manifest.js';
import { readTruth } from '../dataset/load.js';
import { buildRegions, type RegionInput } from '../dataset/regions.js';
import { readImageFile, readMaskFile } from '../io/files.js';
import { emptySums, figuresFromSums, scorePair } from '../metrics/score.js';
import type { RunConfig } from './plan.js';
import type { MetricSet } from '../metrics/catalogue.js';

/** Scores of a pair that cannot be scored: every slice empty (0 pixels, empty figures). */
export function unscoredPair(set: MetricSet, layout: SliceLayout = {}): PairScore {
  const out = {} as PairScore;
  for (const sl of slicesOf(layout)) {
    const sums = emptySums(set.thresholds.length);
    out[sl.key] = { sums, figures: figuresFromSums(sums, set, null) };
  }
  return out;
}

/** The region names and band labels a result carries (absent when the built-ins only, or no bands). */
export interface SliceLayout {
  regions?: string[];
  bands?: string[];
}

/** The layout fields of a job result for a region map. */
export function layoutOf(map: Pick<RegionMap, 'names' | 'bands'>): SliceLayout {
  const builtIn = map.names.length === REGION_IDS.length;
  return { ...(builtIn ? {} : { regions: [...map.names] }), ...(map.bands.length ? { bands: [...map.bands] } : {}) };
}

/**
 * All-invalid scores from the truth alone. `leftGray` (same size as the truth) feeds
 * the flat region; without it the flat region is left empty.
 */
export function truthOnlyScores(
  truth: FloatImage,
  leftGray: Float32Array | undefined,
  input: Omit<RegionInput, 'truth' | 'leftGray' | 'width' | 'height'>,
  regionParams: RegionParams,
  set: MetricSet,
): { scores: PairScore } & SliceLayout {
  const n = truth.width * truth.height;
  const gray = leftGray ?? new Float32Array(n);
  const regions = buildRegions({ ...input, truth: truth.data, leftGray: gray, width: truth.width, height: truth.height }, regionParams);
  if (!leftGray) {
    const clear = ~REGION_BIT.flat & 0xffff;
    const bits = regions.bits;
    for (let i = 0; i < n; i++) bits[i] = bits[i] & clear;
  }
  const camera = input.camera;
  return { scores: scorePair(null, truth.data, regions, { thresholds: set.thresholds, quantiles: set.quantiles, ...(camera ? { camera } : {}) }), ...layoutOf(regions) };
}

async function tryRead<T>(f: () => Promise<T>): Promise<T | undefined> {
  try {
    return await f();
  } catch {
    return undefined;
  }
}

/** Read what can be read of a broken pair and score it as all-invalid (see the file comment). */
export async function brokenPairScores(m: Manifest, entry: PairEntry, plan: { regions: RegionParams; depthBands?: readonly number[] }, set: MetricSet): Promise<{ scores: PairScore } & SliceLayout> {
  const camera = pairCamera(m, entry);
  const bandEdges = camera ? plan.depthBands : undefined;
  const nullMasks = m.regionNames.map((name) => ({ name, data: null }));
  const layout: SliceLayout = {
    ...(m.regionNames.length ? { regions: [...REGION_IDS, ...m.regionNames] } : {}),
    ...(bandEdges?.length ? { bands: bandLabels(bandEdges) } : {}),
  };
  const truth = await tryRead(() => readTruth(m, entry));
  if (!truth) return { scores: unscoredPair(set, layout), ...layout };
  const same = (s: { width: number; height: number } | undefined): boolean => s !== undefined && s.width === truth.width && s.height === truth.height;
  const left = await tryRead(() => readImageFile(entry.left));
  const mask = entry.occlusion ? await tryRead(() => readMaskFile(entry.occlusion!)) : undefined;
  const ignore = entry.ignore ? await tryRead(() => readMaskFile(entry.ignore!)) : undefined;
  return truthOnlyScores(
    truth,
    same(left) ? toLuminance(left!) : undefined,
    { occlusion: same(mask) ? mask!.data : undefined, ignore: same(ignore) ? ignore!.data : undefined, masks: nullMasks, sparse: m.sparseTruth, camera, bandEdges },
    plan.regions,
    set,
  );
}

/** The failed result of one configuration on a broken pair. */
export function brokenPairResult(cfg: RunConfig, job: { dataset: string; condition?: string }, entry: PairEntry, error: string, scored: { scores: PairScore } & SliceLayout, set: MetricSet): JobResult {
  const { dataset, condition = CLEAN } = job;
  return {
    matcher: cfg.label,
    matcherId: cfg.matcherId,
    ...(condition !== CLEAN ? { condition } : {}),
    params: cfg.params,
    dataset,
    pair: entry.id,
    status: 'failed',
    error: `pair not loaded: ${error}`,
    time_ms: null,
    peak_mb: null,
    ...scored,
    thresholds: [...set.thresholds],
    quantiles: [...set.quantiles],
    ...pairFields(entry),
  };
}
