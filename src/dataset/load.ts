/**
 * Load one pair of a dataset into memory: both images (full bit depth), their
 * luminance, the truth and the occlusion mask when the manifest has one.
 * Every image and mask of a pair must have the same size (InputError naming both
 * files and both sizes).
 */
import { InputError } from '../core/errors.js';
import { toLuminance } from '../core/image.js';
import { depthToDisparityInPlace } from '../core/camera.js';
import type { LoadedPair, PairEntry } from '../core/pair.js';
import type { DisparityMap } from '../core/image.js';
import { readDisparityFile, readImageFile, readMaskFile } from '../io/files.js';
import type { Manifest } from './manifest.js';
import { pairCamera } from './manifest.js';

export interface LoadPairOptions {
  /** Refuse images above this many pixels (io's DEFAULT_MAX_PIXELS when unset). */
  maxPixels?: number;
}

interface Sized {
  width: number;
  height: number;
}

/** Throw an InputError naming both files and both sizes when `b` differs from `a`. */
export function assertSameSize(fileA: string, a: Sized, fileB: string, b: Sized): void {
  if (a.width !== b.width || a.height !== b.height) {
    throw new InputError(
      fileB,
      `size ${b.width}x${b.height} differs from ${fileA} (${a.width}x${a.height}); every image and mask of a pair must have the same size`,
    );
  }
}

/** Truth reader options for a manifest: PNG truth uses the manifest's truthEncoding. */
export function truthReadOptions(m: Manifest, maxPixels?: number): { pngScale?: number; pngInvalid?: number; maxPixels?: number } {
  return {
    ...(m.truthEncoding ? { pngScale: m.truthEncoding.scale, pngInvalid: m.truthEncoding.invalid } : {}),
    ...(maxPixels !== undefined ? { maxPixels } : {}),
  };
}

/**
 * A pair's truth as disparity (px, NaN = unknown): depth truth (truthKind "depth") is
 * converted with the pair's camera, d = focalPx * baselineM / Z - cxShiftPx.
 */
export async function readTruth(m: Manifest, entry: PairEntry, maxPixels?: number): Promise<DisparityMap> {
  const truth = await readDisparityFile(entry.truth, truthReadOptions(m, maxPixels));
  if (m.truthKind === 'depth') {
    const camera = pairCamera(m, entry);
    if (!camera) throw new InputError(m.file, `depth truth of pair ${entry.id} needs a camera`);
    depthToDisparityInPlace(truth.data, camera, m.depthUnit ?? 'm');
  }
  return truth;
}

/** Load one pair. Throws InputError for missing, unreadable or mismatched files. */
export async function loadPair(m: Manifest, entry: PairEntry, opts: LoadPairOptions = {}): Promise<LoadedPair> {
  const po = opts.maxPixels !== undefined ? { maxPixels: opts.maxPixels } : undefined;
  const left = await readImageFile(entry.left, po);
  const right = await readImageFile(entry.right, po);
  assertSameSize(entry.left, left, entry.right, right);
  const truth = await readTruth(m, entry, opts.maxPixels);
  assertSameSize(entry.left, left, entry.truth, truth);
  const camera = pairCamera(m, entry);
  const mask = async (file: string): Promise<Uint8Array> => {
    const got = await readMaskFile(file, po);
    assertSameSize(entry.left, left, file, got);
    return got.data;
  };
  const occlusion = entry.occlusion ? await mask(entry.occlusion) : undefined;
  const ignore = entry.ignore ? await mask(entry.ignore) : undefined;
  const masks: { name: string; data: Uint8Array | null }[] = [];
  for (const name of m.regionNames) {
    const file = entry.masks?.[name];
    masks.push({ name, data: file !== undefined ? await mask(file) : null });
  }
  return {
    dataset: m.name,
    id: entry.id,
    width: left.width,
    height: left.height,
    left,
    right,
    leftGray: toLuminance(left),
    rightGray: toLuminance(right),
    truth,
    ...(occlusion ? { occlusion } : {}),
    ...(ignore ? { ignore } : {}),
    ...(masks.length ? { masks } : {}),
    ...(m.sparseTruth ? { sparseTruth: true } : {}),
    ...(camera ? { camera } : {}),
    disparityRange: m.disparityRange,
    ...(entry.group !== undefined ? { group: entry.group } : {}),
    ...(entry.frame !== undefined ? { frame: entry.frame } : {}),
    ...(entry.tags ? { tags: entry.tags } : {}),
    files: entry,
  };
}

