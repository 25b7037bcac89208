import { mkdtempSync, readFileSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { UsageError } from '../../src/core/errors.js';
import { loadManifest } from '../../src/dataset/manifest.js';
import { readDisparityFile, readImageFile, readMaskFile } from '../../src/io/index.js';
import { writeDemoDataset, writeSyntheticDataset } from '../../src/synth/index.js';

const dirs: string[] = [];
function tempDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'parallax-synth-demo-'));
  dirs.push(d);
  return d;
}
afterAll(() => {
  for (const d of dirs) rmSync(d, { recursive: true, force: true });
});

interface RawManifest {
  name: string;
  camera?: { focalPx: number; baselineM: number; cxShiftPx: number };
  disparityRange: [number, number];
  pairs: { id: string; left: string; right: string; truth: string; occlusion: string; tags: string[]; group: string }[];
}

describe('demo dataset (checks: the manifest form of the README, read back with src/io and src/dataset)', () => {
  test('writeDemoDataset writes >= 6 dock pairs + 1 random-dot pair, all files consistent', async () => {
    const dir = tempDir();
    const progress: [number, number][] = [];
    await writeDemoDataset(dir, { width: 128, height: 96, seed: 4, samples: 2, onProgress: (d, t) => progress.push([d, t]) });
    const raw = JSON.parse(readFileSync(join(dir, 'dataset.json'), 'utf8')) as RawManifest;
    expect(raw.name).toBe('dock-demo');
    expect(raw.camera).toBeDefined();
    expect(raw.camera!.cxShiftPx).toBe(0);
    expect(raw.camera!.focalPx).toBeGreaterThan(0);
    expect(raw.pairs.length).toBeGreaterThanOrEqual(7);
    const dots = raw.pairs.filter((p) => p.id.startsWith('dots-'));
    expect(dots.length).toBe(1);
    expect(raw.pairs.length - dots.length).toBeGreaterThanOrEqual(6);
    const tags = new Set(raw.pairs.flatMap((p) => p.tags));
    for (const t of ['low-texture', 'repetitive', 'brightness-mismatch', 'slanted', 'thin-structures']) expect(tags.has(t)).toBe(true);
    expect(progress.at(-1)).toEqual([raw.pairs.length, raw.pairs.length]);
    expect(progress.length).toBe(raw.pairs.length);
    // The manifest passes the project's own schema and path checks.
    const m = loadManifest(dir);
    expect(m.pairs.length).toBe(raw.pairs.length);
    const [lo, hi] = raw.disparityRange;
    for (const p of raw.pairs) {
      expect(p.left).toBe(`${p.id}/left.png`);
      for (const f of [p.left, p.right, p.truth, p.occlusion]) expect(existsSync(join(dir, f))).toBe(true);
      const left = await readImageFile(join(dir, p.left));
      const right = await readImageFile(join(dir, p.right));
      const truth = await readDisparityFile(join(dir, p.truth));
      const occ = await readMaskFile(join(dir, p.occlusion));
      for (const img of [left, right, truth, occ]) {
        expect(img.width).toBe(128);
        expect(img.height).toBe(96);
      }
      expect(left.bitDepth).toBe(8);
      let occluded = 0;
      let outside = 0; // NaN fails both comparisons: closed rooms give every pixel a truth
      for (let i = 0; i < truth.data.length; i++) {
        const d = truth.data[i];
        if (!(d >= lo && d <= hi)) outside++;
        occluded += occ.data[i];
      }
      expect(outside).toBe(0);
      expect(occluded).toBeGreaterThan(0); // every pair has some occlusion or left-edge exits
    }
    // The mismatch pair really differs in brightness: mean right code vs left over the same
    // scene, at least 10 codes (4% of full scale; common practice for a visible mismatch).
    const mm = raw.pairs.find((p) => p.tags.includes('brightness-mismatch'))!;
    const l = await readImageFile(join(dir, mm.left));
    const r = await readImageFile(join(dir, mm.right));
    const mean = (a: Uint8Array | Uint16Array): number => {
      let s = 0;
      for (const v of a) s += v;
      return s / a.length;
    };
    expect(mean(r.data) - mean(l.data)).toBeGreaterThan(10);
  });

  test('same seed writes byte-identical files; fewer pairs takes the head of the list', async () => {
    const a = tempDir();
    const b = tempDir();
    await writeDemoDataset(a, { width: 64, height: 48, seed: 2, pairs: 3 });
    await writeDemoDataset(b, { width: 64, height: 48, seed: 2, pairs: 3 });
    const ma = JSON.parse(readFileSync(join(a, 'dataset.json'), 'utf8')) as RawManifest;
    expect(ma.pairs.map((p) => p.id)).toEqual(['crates-01', 'crates-02', 'wall-01']);
    expect(readFileSync(join(b, 'dataset.json'), 'utf8')).toBe(readFileSync(join(a, 'dataset.json'), 'utf8'));
    for (const p of ma.pairs) {
      for (const f of [p.left, p.right, p.truth, p.occlusion]) expect(readFileSync(join(b, f)).equals(readFileSync(join(a, f)))).toBe(true);
    }
  });

  test('more pairs than the standard list adds seeded dock pairs', async () => {
    const d = tempDir();
    // The standard list is eleven: eight pairs, then the three frames of the drive.
    await writeDemoDataset(d, { width: 48, height: 32, seed: 5, pairs: 13, samples: 1 });
    const m = loadManifest(d);
    expect(m.pairs.map((p) => p.id).slice(7)).toEqual(['dots-01', 'drive-00', 'drive-01', 'drive-02', 'extra-12', 'extra-13']);
    expect(m.pairs.filter((p) => p.frame !== undefined).map((p) => p.frame)).toEqual([0, 1, 2]);
    expect(m.pairs[11].tags!.length).toBeGreaterThan(0);
  });

  test('bad sizes and counts are usage errors naming the option', async () => {
    const d = tempDir();
    await expect(writeDemoDataset(d, { width: 1280 })).rejects.toThrow(UsageError);
    await expect(writeDemoDataset(d, { width: 1280 })).rejects.toThrow(/^width: /);
    await expect(writeDemoDataset(d, { pairs: 0 })).rejects.toThrow(/^pairs: /);
    await expect(writeSyntheticDataset(d, { count: 0, seed: 1, width: 64, height: 48, name: 'x' })).rejects.toThrow(/^count: /);
  });

  test('writeSyntheticDataset writes count dock pairs with a valid manifest', async () => {
    const dir = tempDir();
    await writeSyntheticDataset(dir, { count: 5, seed: 77, width: 64, height: 48, name: 'held-out-77', samples: 2 });
    const m = loadManifest(dir);
    expect(m.name).toBe('held-out-77');
    expect(m.pairs.map((p) => p.id)).toEqual(['syn-0000', 'syn-0001', 'syn-0002', 'syn-0003', 'syn-0004']);
    const [lo, hi] = m.disparityRange;
    for (const p of m.pairs) {
      const t = await readDisparityFile(p.truth);
      expect(t.data.every((d) => d >= lo && d <= hi)).toBe(true);
    }
  });
});
