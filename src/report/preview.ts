/**
 * Small previews of matcher outputs for the HTML report, stored in the run folder as
 * PFM: `<runDir>/previews/<slug(label)>/<slug(dataset)>/<slug(pair)>.pfm`.
 * Downscaled by an integer factor so the width is at most PREVIEW_MAX_WIDTH, each
 * output pixel the mean of the valid (finite) pixels of its block, NaN when none is.
 */
import { createHash } from 'node:crypto';
import { mkdir, readFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import type { FloatImage } from '../core/image.js';
import { decodePfm, encodePfm } from '../io/pfm.js';
import { writeFileAtomic } from '../io/files.js';

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
      const v = data[irow + x]!;
      if (v - v !== 0) continue; // NaN or infinity
      const o = orow + Math.floor(x / factor);
      sum[o] += v;
      cnt[o]++;
    }
  }
  const out = new Float32Array(w * h);
  for (let i = 0; i < out.length; i++) out[i] = cnt[i]! > 0 ? sum[i]! / cnt[i]! : NaN;
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
