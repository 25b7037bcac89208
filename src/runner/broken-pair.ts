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
import type { FloatImage } from '../core/image.js';
import { toLuminance } from '../core/image.js';
import { pairFields, type PairEntry } from '../core/pair.js';
import { REGION_BIT, REGION_IDS, type RegionParams } from '../core/regions.js';
import type { JobResult, PairScore } from '../core/score.js';
import { pairCamera, type Manifest } from '../dataset/manifest.js';
import { truthReadOptions } from '../dataset/load.js';
import { buildRegions } from '../dataset/regions.js';
import { readDisparityFile, readImageFile, readMaskFile } from '../io/files.js';
import { emptySums, figuresFromSums, scorePair } from '../metrics/score.js';
import type { RunConfig } from './plan.js';
import type { MetricSet } from '../metrics/catalogue.js';

/** Scores of a pair that cannot be scored: every region empty (0 pixels, empty figures). */
export function unscoredPair(set: MetricSet): PairScore {
  const out = {} as PairScore;
  for (const id of REGION_IDS) {
    const sums = emptySums(set.thresholds.length);
    out[id] = { sums, figures: figuresFromSums(sums, set, null) };
  }
  return out;
}

/**
 * All-invalid scores from the truth alone. `leftGray` (same size as the truth) feeds
 * the flat region; without it the flat region is left empty.
 */
export function truthOnlyScores(
  truth: FloatImage,
  leftGray: Float32Array | undefined,
  occlusion: Uint8Array | undefined,
  regionParams: RegionParams,
  set: MetricSet,
  camera?: { focalPx: number; baselineM: number; cxShiftPx: number },
): PairScore {
  const n = truth.width * truth.height;
  const gray = leftGray ?? new Float32Array(n);
  const regions = buildRegions(truth.data, gray, occlusion, truth.width, truth.height, regionParams);
  if (!leftGray) {
    const clear = ~REGION_BIT.flat & 0xff;
    const bits = regions.bits;
    for (let i = 0; i < n; i++) bits[i] = bits[i] & clear;
  }
  return scorePair(null, truth.data, regions, { thresholds: set.thresholds, quantiles: set.quantiles, ...(camera ? { camera } : {}) });
}

async function tryRead<T>(f: () => Promise<T>): Promise<T | undefined> {
  try {
    return await f();
  } catch {
    return undefined;
  }
}

/** Read what can be read of a broken pair and score it as all-invalid (see the file comment). */
export async function brokenPairScores(m: Manifest, entry: PairEntry, regionParams: RegionParams, set: MetricSet): Promise<PairScore> {
  const truth = await tryRead(() => readDisparityFile(entry.truth, truthReadOptions(m)));
  if (!truth) return unscoredPair(set);
  const same = (s: { width: number; height: number } | undefined): boolean => s !== undefined && s.width === truth.width && s.height === truth.height;
  const left = await tryRead(() => readImageFile(entry.left));
  const mask = entry.occlusion ? await tryRead(() => readMaskFile(entry.occlusion!)) : undefined;
  const camera = pairCamera(m, entry);
  return truthOnlyScores(truth, same(left) ? toLuminance(left!) : undefined, same(mask) ? mask!.data : undefined, regionParams, set, camera);
}

/** The failed result of one configuration on a broken pair. */
export function brokenPairResult(cfg: RunConfig, dataset: string, entry: PairEntry, error: string, scores: PairScore, set: MetricSet): JobResult {
  return {
    matcher: cfg.label,
    matcherId: cfg.matcherId,
    params: cfg.params,
    dataset,
    pair: entry.id,
    status: 'failed',
    error: `pair not loaded: ${error}`,
    time_ms: null,
    peak_mb: null,
    scores,
    thresholds: [...set.thresholds],
    quantiles: [...set.quantiles],
    ...pairFields(entry),
  };
}
