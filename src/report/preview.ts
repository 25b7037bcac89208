/**
 * Small previews of matcher outputs for the HTML report, stored in the run folder as
 * PFM: `<runDir>/previews/<slug(label)>/<slug(dataset)>/<slug(pair)>.pfm`.
 * Downscaled by an integer factor so the width is at most PREVIEW_MAX_WIDTH, each
 * output pixel the mean of the valid (finite) pixels of its block, NaN when none is.
 */
import { createHash } from 'node:crypto';
import { mkdir, readFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import type { FloatImage, RasterImage } from '../core/image.js';
import type { RegionMap } from '../core/regions.js';
import { decodePfm, encodePfm } from '../io/pfm.js';
import { decodePng, encodePng } from '../io/png.js';
import { writeFileAtomic } from '../io/files.js';
import { downscaleRaster, regionsToThumb, thumbFactor } from './thumbs.js';

export const PREVIEW_MAX_WIDTH = 256;

/**
 * A safe, collision-free path segment for a label: characters outside [A-Za-z0-9._-]
 * become `_`, and when anything was changed (or the name starts with a dot) a short
 * hash of the original is appended, so `sgm:p2=96` and `sgm_p2_96` differ.
 */
export function slug(label: string): string {
  const clean = label.replace(/[^A-Za-z0-9._-]/g, '_').slice(0, 80);
  if (clean === label && label.length > 0 && !label.startsWith('.')) return label;
  const h = createHash('sha256').update(label, 'utf8').digest('hex').slice(0, 8);
  return `${clean.replace(/^\.+/, '_')}-${h}`;
}

/** Integer reduction factor so that the width is at most maxWidth. */
export function previewFactor(width: number, maxWidth = PREVIEW_MAX_WIDTH): number {
  return Math.max(1, Math.ceil(width / maxWidth));
}

/** NaN-aware block mean by an integer factor (edge blocks may be partial). */
export function downscaleNanMean(img: FloatImage, factor: number): FloatImage {
  const { width, height, data } = img;
  const w = Math.ceil(width / factor);
  const h = Math.ceil(height / factor);
  const sum = new Float64Array(w * h);
  const cnt = new Uint32Array(w * h);
  for (let y = 0; y < height; y++) {
    const orow = Math.floor(y / factor) * w;
    const irow = y * width;
    for (let x = 0; x < width; x++) {
      const v = data[irow + x];
      if (v - v !== 0) continue; // NaN or infinity
      const o = orow + Math.floor(x / factor);
      sum[o] += v;
      cnt[o]++;
    }
  }
  const out = new Float32Array(w * h);
  for (let i = 0; i < out.length; i++) out[i] = cnt[i] > 0 ? sum[i] / cnt[i] : NaN;
  return { width: w, height: h, data: out };
}

export function previewPath(runDir: string, label: string, dataset: string, pair: string): string {
  return join(runDir, 'previews', slug(label), slug(dataset), `${slug(pair)}.pfm`);
}

export async function writePreview(runDir: string, label: string, dataset: string, pair: string, disparity: FloatImage): Promise<void> {
  const small = downscaleNanMean(disparity, previewFactor(disparity.width));
  const path = previewPath(runDir, label, dataset, pair);
  await mkdir(dirname(path), { recursive: true });
  await writeFileAtomic(path, encodePfm(small));
}

/** The stored preview, or null when there is none (e.g. a failed job). */
export async function readPreview(runDir: string, label: string, dataset: string, pair: string): Promise<FloatImage | null> {
  const path = previewPath(runDir, label, dataset, pair);
  let buf: Buffer;
  try {
    buf = await readFile(path);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw e;
  }
  return decodePfm(buf, path);
}

/**
 * Per-pair pictures for the report, written once per pair by the runner (it has the
 * decoded left image and the region map at hand), so the report need not decode every
 * left image nor rebuild every region map: `<runDir>/previews/@pairs/<dataset>/<pair>.left.png`
 * (left image thumbnail) and `.regions.png` (region bits at the thumbnail grid, 8-bit gray).
 * `@` never occurs in a slug, so this folder cannot clash with a configuration's.
 */
export function pairPreviewPaths(runDir: string, dataset: string, pair: string): { left: string; regions: string } {
  const base = join(runDir, 'previews', '@pairs', slug(dataset), slug(pair));
  return { left: `${base}.left.png`, regions: `${base}.regions.png` };
}

export async function writePairPreview(runDir: string, dataset: string, pair: string, left: RasterImage, regions: RegionMap): Promise<void> {
  const f = thumbFactor(left.width);
  const thumb = downscaleRaster(left, f);
  const bits = regionsToThumb(regions.bits, regions.width, regions.height, f);
  const paths = pairPreviewPaths(runDir, dataset, pair);
  await mkdir(dirname(paths.left), { recursive: true });
  await writeFileAtomic(paths.left, encodePng(thumb));
  await writeFileAtomic(paths.regions, encodePng({ width: thumb.width, height: thumb.height, channels: 1, bitDepth: 8, data: bits }));
}

/** The pair's stored thumbnails, or null when the runner wrote none. */
export async function readPairPreview(runDir: string, dataset: string, pair: string): Promise<{ left: RasterImage; regionBits: Uint8Array; width: number; height: number } | null> {
  const paths = pairPreviewPaths(runDir, dataset, pair);
  let lb: Buffer;
  let rb: Buffer;
  try {
    [lb, rb] = await Promise.all([readFile(paths.left), readFile(paths.regions)]);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw e;
  }
  const left = decodePng(lb, paths.left);
  const r = decodePng(rb, paths.regions);
  if (r.width !== left.width || r.height !== left.height || r.channels !== 1 || r.bitDepth !== 8) return null;
  return { left, regionBits: r.data as Uint8Array, width: left.width, height: left.height };
}
