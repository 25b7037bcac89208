import { mkdtempSync, rmSync, writeFileSync, readFileSync, unlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { loadManifest } from '../../src/dataset/manifest.js';
import { loadPair } from '../../src/dataset/load.js';
import { checkDataset, truthStats } from '../../src/dataset/check.js';
import { encodePfm } from '../../src/io/pfm.js';
import { encodePng } from '../../src/io/png.js';
import { writeDataset } from './fixture.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-load-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

function gray(w: number, h: number, v = 100): Buffer {
  return encodePng({ width: w, height: h, channels: 1, bitDepth: 8, data: new Uint8Array(w * h).fill(v) });
}

describe('loadPair', () => {
  it('loads images, luminance, truth and camera of a pair', async () => {
    const ds = writeDataset(join(root, 'ok'));
    const m = loadManifest(ds.dir);
    const p = await loadPair(m, m.pairs[0]);
    expect([p.width, p.height]).toEqual([64, 48]);
    // 8-bit gray luminance is the stored value (README, "Datasets" conventions: 0-255 scale, BT.601 only for colour).
    expect(p.leftGray[5]).toBe(ds.pairs[0].left[5]);
    // Truth as written by the fixture (PFM stores float32 exactly).
    expect(Array.from(p.truth.data.slice(0, 3))).toEqual([4, 4, 4]);
    expect(p.camera).toEqual({ focalPx: 700, baselineM: 0.12, cxShiftPx: 0 });
    expect(p.occlusion).toBeUndefined();
  });

  it('a size mismatch names both files and both sizes', async () => {
    const ds = writeDataset(join(root, 'mismatch'), { ids: ['bay-1'] });
    writeFileSync(join(ds.dir, 'bay-1/right.png'), gray(60, 48));
    const m = loadManifest(ds.dir);
    const err = await loadPair(m, m.pairs[0]).then(
      () => undefined,
      (e: unknown) => e,
    );
    expect(err).toBeInstanceOf(InputError);
    const msg = (err as Error).message;
    expect(msg).toContain(join(ds.dir, 'bay-1/left.png'));
    expect(msg).toContain(join(ds.dir, 'bay-1/right.png'));
    expect(msg).toContain('64x48');
    expect(msg).toContain('60x48');
  });

  it('a mask of another size than the images is refused the same way', async () => {
    const ds = writeDataset(join(root, 'mask'), { ids: ['bay-2'] });
    writeFileSync(join(ds.dir, 'bay-2/occ.png'), gray(64, 40, 0));
    const mj = JSON.parse(readFileSync(join(ds.dir, 'dataset.json'), 'utf8'));
    mj.pairs[0].occlusion = 'bay-2/occ.png';
    writeFileSync(join(ds.dir, 'dataset.json'), JSON.stringify(mj));
    const m = loadManifest(ds.dir);
    await expect(loadPair(m, m.pairs[0])).rejects.toThrow(/occ\.png: size 64x40 differs from .*left\.png \(64x48\)/);
  });
});

describe('truthStats', () => {
  it('counts invalid and out-of-range truth (hand-worked example)', () => {
    // [NaN, -1, 0, 5, 10, Inf] with range [0, 8]: invalid = NaN and Inf (2);
    // outside = -1 and 10 (2); finite min -1, max 10.
    const s = truthStats(new Float32Array([NaN, -1, 0, 5, 10, Infinity]), 0, 8);
    expect(s).toEqual({ invalid: 2, outside: 2, min: -1, max: 10 });
  });
});

describe('checkDataset', () => {
  it('a clean dataset has no problems and a short summary', async () => {
    const ds = writeDataset(join(root, 'clean'));
    const r = await checkDataset(ds.dir);
    expect(r.problems).toEqual([]);
    expect(r.summary).toContain('dock-test: 2 pair(s)');
    expect(r.summary).toContain('64x48');
  });

  it('finds each planted problem, one line each', async () => {
    const ds = writeDataset(join(root, 'planted'), { ids: ['p-missing', 'p-broken', 'p-size', 'p-range', 'p-invalid', 'p-dup'] });
    const dir = ds.dir;
    // 1. missing file
    unlinkSync(join(dir, 'p-missing/right.png'));
    // 2. unreadable (truncated) PFM truth
    const pfm = readFileSync(join(dir, 'p-broken/truth.pfm'));
    writeFileSync(join(dir, 'p-broken/truth.pfm'), pfm.subarray(0, 40));
    // 3. size mismatch
    writeFileSync(join(dir, 'p-size/left.png'), gray(32, 48));
    // 4. truth outside disparityRange [0, 32]: one pixel at 50
    const t = ds.pairs[3].truth.slice();
    t[7] = 50;
    writeFileSync(join(dir, 'p-range/truth.pfm'), encodePfm({ width: 64, height: 48, data: t }));
    // 5. mostly invalid truth: 75% NaN (> 50% default limit)
    const inv = ds.pairs[4].truth.slice();
    for (let i = 0; i < (inv.length * 3) / 4; i++) inv[i] = NaN;
    writeFileSync(join(dir, 'p-invalid/truth.pfm'), encodePfm({ width: 64, height: 48, data: inv }));
    // 6. duplicate id
    const mj = JSON.parse(readFileSync(join(dir, 'dataset.json'), 'utf8'));
    mj.pairs[5].id = 'p-range';
    writeFileSync(join(dir, 'dataset.json'), JSON.stringify(mj));

    const r = await checkDataset(dir);
    const lines = r.problems;
    const has = (re: RegExp): boolean => lines.some((l) => re.test(l));
    expect(has(/p-missing\/right\.png: missing file/)).toBe(true);
    expect(has(/p-broken\/truth\.pfm: /)).toBe(true);
    expect(has(/p-size\/(right|truth)\.(png|pfm): size 64x48 differs from .*p-size\/left\.png \(32x48\)/)).toBe(true);
    expect(has(/p-range\/truth\.pfm: 1 truth pixel\(s\) outside disparityRange \[0, 32\] \(truth spans 4 to 50/)).toBe(true);
    expect(has(/p-invalid\/truth\.pfm: 75% of truth pixels are invalid/)).toBe(true);
    expect(has(/dataset\.json: field pairs\[5\]\.id: duplicate pair id "p-range"/)).toBe(true);
    for (const l of lines) expect(l).not.toContain('\n');
    // A raised limit accepts the 75%-invalid pair (the option works).
    const r2 = await checkDataset(dir, { maxInvalidPercent: 80 });
    expect(r2.problems.some((l) => /invalid, above/.test(l))).toBe(false);
  });

  it('a malformed manifest is reported, not thrown', async () => {
    const d = join(root, 'badjson');
    writeDataset(d);
    writeFileSync(join(d, 'dataset.json'), '{ nope');
    const r = await checkDataset(d);
    expect(r.problems).toHaveLength(1);
    expect(r.problems[0]).toMatch(/dataset\.json: not valid JSON/);
  });
});
