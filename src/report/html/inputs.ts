/**
 * What the view of one pair reads from disk: the truth (at the thumbnail grid), the
 * stored pair thumbnails or the dataset files to make them from, and each job's stored
 * preview. Reads never reject: a problem becomes the note shown in the pair view.
 */
import { configLabel } from '../../conditions/spec.js';
import { mkdir, readFile } from 'node:fs/promises';
import { dirname } from 'node:path';
import type { FloatImage } from '../../core/image.js';
import { toLuminance } from '../../core/image.js';
import type { JobResult } from '../../core/score.js';
import { DEFAULT_REGION_PARAMS, type RegionParams } from '../../core/regions.js';
import { decodePng, encodePng, readPngHeader } from '../../io/png.js';
import { maskFromRaster, readDisparityFile, readFileBytes, writeFileAtomic } from '../../io/files.js';
import type { RunRecord } from '../../io/run-record.js';
import type { Manifest } from '../../dataset/manifest.js';
import { assertSameSize, truthReadOptions } from '../../dataset/load.js';
import { buildRegions } from '../../dataset/regions.js';
import { pairPreviewPaths, previewFactor, readPreview } from '../preview.js';
import { blockMeanThumb, downscaleRaster, regionsToThumb, thumbFactor } from '../thumbs.js';

/** Region parameters of a run (defaults for anything run.json lacks). */
function regionParamsOf(info: RunRecord): RegionParams {
  const p: RegionParams = { ...DEFAULT_REGION_PARAMS };
  for (const k of Object.keys(p) as (keyof RegionParams)[]) {
    const v = info.config.regions[k];
    if (typeof v === 'number') p[k] = v;
  }
  return p;
}

/** Everything a pair view needs from disk, read ahead of the pair being drawn. */
export interface PairInputs {
  /** Truth at the thumbnail grid (block means), or null with `problem` set. */
  truth: { thumb: FloatImage; pf: number; width: number; height: number; f: number } | null;
  problem: string | null;
  /** The runner's (or an earlier report's) stored pair thumbnails: left PNG bytes as stored, region bits. */
  stored: { leftPng: Buffer; regionBits: Uint8Array } | null;
  /** Without stored thumbnails: the full truth and the raw bytes of the left image and occlusion mask. */
  dataset: { truth: FloatImage; truthPath: string; left: Buffer; leftPath: string; occlusion: Buffer | null; occlusionPath: string | null } | null;
  /** Stored preview of each job's output (null: none, e.g. a failed job). */
  previews: (FloatImage | null)[];
}

async function readStoredPairPreview(runDir: string, dataset: string, pair: string, w: number, h: number): Promise<PairInputs['stored']> {
  const paths = pairPreviewPaths(runDir, dataset, pair);
  let lb: Buffer;
  let rb: Buffer;
  try {
    [lb, rb] = await Promise.all([readFile(paths.left), readFile(paths.regions)]);
  } catch {
    return null;
  }
  try {
    const lh = readPngHeader(lb, paths.left);
    if (lh.width !== w || lh.height !== h) return null;
    const r = decodePng(rb, paths.regions);
    if (r.width !== w || r.height !== h || r.channels !== 1 || r.bitDepth !== 8) return null;
    return { leftPng: lb, regionBits: r.data as Uint8Array };
  } catch {
    return null;
  }
}

/** Read (never rejects) what the view of one pair needs. */
export async function loadPairInputs(runDir: string, manifest: Manifest | null, manifestProblem: string | null, dataset: string, pair: string, jobs: JobResult[]): Promise<PairInputs> {
  const inputs: PairInputs = { truth: null, problem: null, stored: null, dataset: null, previews: jobs.map(() => null) };
  const entry = manifest?.pairs.find((p) => p.id === pair);
  let truth: FloatImage | null = null;
  if (!manifest) inputs.problem = `Dataset images not shown: ${manifestProblem ?? 'manifest not found'}`;
  else if (!entry) inputs.problem = `Pair ${pair} is no longer in the dataset manifest.`;
  else {
    try {
      truth = await readDisparityFile(entry.truth, truthReadOptions(manifest));
      const f = thumbFactor(truth.width);
      const pf = previewFactor(truth.width);
      inputs.truth = { thumb: blockMeanThumb(truth, pf, f), pf, width: truth.width, height: truth.height, f };
    } catch (e) {
      inputs.problem = `Dataset images not shown: ${(e as Error).message}`;
    }
  }
  const t = inputs.truth;
  if (!t || !truth || !entry) return inputs;
  const [stored, ...previews] = await Promise.all([
    readStoredPairPreview(runDir, dataset, pair, t.thumb.width, t.thumb.height),
    ...jobs.map((j) => (j.status === 'ok' ? readPreview(runDir, configLabel(j), dataset, pair).catch(() => null) : Promise.resolve(null))),
  ]);
  inputs.stored = stored;
  inputs.previews = previews;
  if (!stored) {
    try {
      const [left, occlusion] = await Promise.all([readFileBytes(entry.left), entry.occlusion ? readFileBytes(entry.occlusion) : Promise.resolve(null)]);
      inputs.dataset = { truth, truthPath: entry.truth, left, leftPath: entry.left, occlusion, occlusionPath: entry.occlusion ?? null };
    } catch (e) {
      inputs.problem = `Dataset images not shown: ${(e as Error).message}`;
    }
  }
  return inputs;
}

/**
 * Left thumbnail and region bits from the dataset files (decode the left image, rebuild
 * the regions), for runs without stored pair thumbnails; with `store`, they are written to
 * the run folder (previews/@pairs) so that the next report reads them instead.
 */
export async function pairThumbsFromDataset(
  runDir: string,
  info: RunRecord,
  d: NonNullable<PairInputs['dataset']>,
  at: { dataset: string; pair: string; factor: number; store: boolean },
): Promise<{ leftPng: Buffer; regionBits: Uint8Array }> {
  const { dataset, pair, factor: f, store } = at;
  const { truth } = d;
  const left = decodePng(d.left, d.leftPath);
  assertSameSize(d.truthPath, truth, d.leftPath, left);
  let occ: Uint8Array | undefined;
  if (d.occlusion && d.occlusionPath) {
    const mask = maskFromRaster(decodePng(d.occlusion, d.occlusionPath));
    assertSameSize(d.truthPath, truth, d.occlusionPath, mask);
    occ = mask.data;
  }
  const regions = buildRegions({ truth: truth.data, leftGray: toLuminance(left), width: truth.width, height: truth.height, occlusion: occ }, regionParamsOf(info));
  const leftThumb = downscaleRaster(left, f);
  const regionBits = regionsToThumb(regions.bits, truth.width, truth.height, f);
  const leftPng = encodePng(leftThumb);
  if (store) {
    // Best effort: a run folder that cannot take them only makes the next report slower.
    const paths = pairPreviewPaths(runDir, dataset, pair);
    try {
      await mkdir(dirname(paths.left), { recursive: true });
      await writeFileAtomic(paths.left, leftPng);
      await writeFileAtomic(paths.regions, encodePng({ width: leftThumb.width, height: leftThumb.height, channels: 1, bitDepth: 8, data: regionBits }));
    } catch {
      /* not stored */
    }
  }
  return { leftPng, regionBits };
}
