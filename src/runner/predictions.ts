/**
 * Imported predictions: disparity maps made elsewhere, scored like a matcher's output.
 * For a pair `<id>` of dataset `<name>` the file is looked up as
 * `<dir>/<name>/<id>.<ext>` first (several datasets in one run), then `<dir>/<id>.<ext>`,
 * with ext in the order pfm, npy, png. PNG needs a scale (and takes an invalid code).
 * A confidence map may sit beside it as `<id>.conf.pfm` or `<id>.conf.npy` (same size,
 * higher = more trusted); it is read when present.
 */
import { depthToDisparityInPlace, type Camera } from '../core/camera.js';
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { UsageError } from '../core/errors.js';
import type { FloatImage } from '../core/image.js';
import { readDisparityFile } from '../io/files.js';

export const PREDICTION_EXTENSIONS = ['pfm', 'npy', 'png'] as const;

export type { PredictionSource } from '../io/run-record.js';
import type { PredictionSource } from '../io/run-record.js';

/** Extensions of a confidence map beside a prediction. */
export const CONFIDENCE_EXTENSIONS = ['conf.pfm', 'conf.npy'] as const;

function findFile(src: PredictionSource, dataset: string, pair: string, extensions: readonly string[]): string | undefined {
  for (const base of [join(src.dir, dataset), src.dir]) {
    for (const ext of extensions) {
      const f = join(base, `${pair}.${ext}`);
      if (existsSync(f)) return f;
    }
  }
  return undefined;
}

/** The prediction file of a pair, or undefined when there is none. */
export function findPredictionFile(src: PredictionSource, dataset: string, pair: string): string | undefined {
  return findFile(src, dataset, pair, PREDICTION_EXTENSIONS);
}

/** Refuse a prediction folder that is missing, or holds PNG files while no scale is given. */
export function checkPredictionSource(src: PredictionSource): void {
  let names: string[];
  try {
    names = readdirSync(src.dir);
  } catch {
    throw new UsageError('--predictions', `${src.dir} is not a readable folder`);
  }
  if (src.scale === undefined && names.some((n) => n.toLowerCase().endsWith('.png'))) {
    throw new UsageError('--prediction-scale', `${src.dir} holds PNG predictions; give their scale (stored value = disparity * scale)`);
  }
}

/** A dataset's name and pair ids, as the coverage check needs them. */
export interface PairList {
  readonly name: string;
  readonly pairIds: readonly string[];
}

/**
 * Check a prediction folder against the run's pairs. No file for any pair is a
 * UsageError naming the folder and one file name it looks for; files (with a
 * prediction extension) that belong to no pair come back, for a warning.
 */
export function predictionCoverage(src: PredictionSource, datasets: readonly PairList[]): { unmatched: string[] } {
  let found = 0;
  const used = new Set<string>();
  for (const d of datasets) {
    for (const id of d.pairIds) {
      const f = findPredictionFile(src, d.name, id);
      if (f === undefined) continue;
      found++;
      used.add(f);
      const c = findFile(src, d.name, id, CONFIDENCE_EXTENSIONS);
      if (c !== undefined) used.add(c);
    }
  }
  const first = datasets.find((d) => d.pairIds.length > 0);
  if (found === 0 && first) {
    throw new UsageError(
      '--predictions',
      `${src.dir} holds no prediction for any pair of the dataset(s) ${datasets.map((d) => d.name).join(', ')}; expected e.g. ${join(src.dir, `${first.pairIds[0]}.pfm`)} (or .npy, .png; or under ${first.name}/)`,
    );
  }
  const unmatched: string[] = [];
  const isPrediction = (n: string): boolean => (PREDICTION_EXTENSIONS as readonly string[]).includes(n.slice(n.lastIndexOf('.') + 1).toLowerCase());
  const folders = [src.dir, ...datasets.map((d) => join(src.dir, d.name))];
  for (const dir of folders) {
    let names: string[];
    try {
      names = readdirSync(dir);
    } catch {
      continue;
    }
    for (const n of names.sort()) {
      const f = join(dir, n);
      if (isPrediction(n) && !used.has(f)) unmatched.push(f);
    }
  }
  return { unmatched };
}

/**
 * Read one prediction. Throws (InputError) for a missing, unreadable or malformed
 * file; the runner records that as a failed job. Depth predictions (src.depthUnit) are
 * turned into disparity with the pair's camera, as depth truth is.
 */
export async function readPrediction(
  src: PredictionSource,
  at: { dataset: string; id: string; width: number; height: number; camera?: Camera | undefined },
): Promise<{ disparity: Float32Array; confidence: Float32Array | null }> {
  const { dataset, id: pair, width, height } = at;
  if (src.depthUnit !== undefined && !at.camera) throw new Error(`depth predictions need a camera; pair ${pair} of ${dataset} has none in its manifest`);
  const file = findPredictionFile(src, dataset, pair);
  if (!file) throw new Error(`no prediction file ${pair}.{${PREDICTION_EXTENSIONS.join(',')}} in ${src.dir}`);
  const img: FloatImage = await readDisparityFile(file, {
    ...(src.scale !== undefined ? { pngScale: src.scale } : {}),
    ...(src.invalid !== undefined ? { pngInvalid: src.invalid } : {}),
    maxPixels: Math.max(1, 4 * width * height), // bounded, yet a wrong size gets the clear message below
  });
  if (img.width !== width || img.height !== height) {
    throw new Error(`${file}: size ${img.width}x${img.height} differs from the pair's ${width}x${height}`);
  }
  if (src.depthUnit !== undefined && at.camera) depthToDisparityInPlace(img.data, at.camera, src.depthUnit);
  const confFile = findFile(src, dataset, pair, CONFIDENCE_EXTENSIONS);
  if (confFile === undefined) return { disparity: img.data, confidence: null };
  const conf = await readDisparityFile(confFile, { maxPixels: Math.max(1, 4 * width * height) });
  if (conf.width !== width || conf.height !== height) {
    throw new Error(`${confFile}: size ${conf.width}x${conf.height} differs from the pair's ${width}x${height}`);
  }
  return { disparity: img.data, confidence: conf.data };
}
