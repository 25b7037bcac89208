/**
 * Small hand-made datasets for the dataset, runner, CLI and end-to-end tests.
 *
 * The scene (64x48 by default): a background plane at disparity `bg` and a box in the
 * middle at disparity `fg`, both fronto-parallel with integer disparities. The right
 * image is random texture; the left image is built from it by the definition of
 * left-referenced disparity, left(x, y) = right(x - d(x, y), y), so every visible
 * left pixel has an exact match. Truth left of the right frame (x - d < 0) is kept.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { encodePfm } from '../../src/io/pfm.js';
import { encodePng } from '../../src/io/png.js';
import { mulberry32 } from '../support/rng.js';

/** mulberry32, the shared seeded test generator (test/support/rng.ts). */
export { mulberry32 };

export interface FixturePair {
  id: string;
  width: number;
  height: number;
  truth: Float32Array;
  left: Uint8Array;
  right: Uint8Array;
}

export function makePair(id: string, seed: number, width = 64, height = 48, bg = 4, fg = 10): FixturePair {
  const rnd = mulberry32(seed);
  const n = width * height;
  const right = new Uint8Array(n);
  for (let i = 0; i < n; i++) right[i] = Math.floor(rnd() * 256);
  const truth = new Float32Array(n);
  const left = new Uint8Array(n);
  const x0 = Math.floor(width * 0.35);
  const x1 = Math.floor(width * 0.65);
  const y0 = Math.floor(height * 0.3);
  const y1 = Math.floor(height * 0.7);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = y * width + x;
      const d = x >= x0 && x < x1 && y >= y0 && y < y1 ? fg : bg;
      truth[i] = d;
      const xr = x - d;
      left[i] = xr >= 0 ? right[y * width + xr] : Math.floor(rnd() * 256);
    }
  }
  return { id, width, height, truth, left, right };
}

export interface WrittenDataset {
  dir: string;
  pairs: FixturePair[];
}

/**
 * Write a dataset folder: `<id>/left.png`, `<id>/right.png`, `<id>/truth.pfm`, and
 * dataset.json (the README's manifest example, extended to several pairs).
 */
export function writeDataset(dir: string, opts: { ids?: string[]; width?: number; height?: number; name?: string } = {}): WrittenDataset {
  const ids = opts.ids ?? ['crates-01', 'crates-02'];
  mkdirSync(dir, { recursive: true });
  const pairs = ids.map((id, k) => makePair(id, 1000 + k, opts.width ?? 64, opts.height ?? 48));
  for (const p of pairs) {
    const pd = join(dir, p.id);
    mkdirSync(pd, { recursive: true });
    writeFileSync(join(pd, 'left.png'), encodePng({ width: p.width, height: p.height, channels: 1, bitDepth: 8, data: p.left }));
    writeFileSync(join(pd, 'right.png'), encodePng({ width: p.width, height: p.height, channels: 1, bitDepth: 8, data: p.right }));
    writeFileSync(join(pd, 'truth.pfm'), encodePfm({ width: p.width, height: p.height, data: p.truth }));
  }
  const manifest = {
    name: opts.name ?? 'dock-test',
    camera: { focalPx: 700, baselineM: 0.12, cxShiftPx: 0 },
    disparityRange: [0, 32],
    truthEncoding: { scale: 64, invalid: 0 },
    pairs: pairs.map((p) => ({ id: p.id, left: `${p.id}/left.png`, right: `${p.id}/right.png`, truth: `${p.id}/truth.pfm` })),
  };
  writeFileSync(join(dir, 'dataset.json'), JSON.stringify(manifest, null, 2));
  return { dir, pairs };
}
