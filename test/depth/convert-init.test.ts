/**
 * Depth truth and predictions: a depth map written as PFM, .npy or 16-bit PNG in m or
 * mm loads as the disparity d = f B / Z - cxShift (Z = f B / (d + cxShift) for a
 * rectified pair, common practice); `dataset init` pairs a folder tree by stem.
 */
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { encodePfm } from '../../src/io/pfm.js';
import { encodeNpy } from '../../src/io/npy.js';
import { encodePngDisparity } from '../../src/io/png.js';
import { loadManifest } from '../../src/dataset/manifest.js';
import { readTruth } from '../../src/dataset/load.js';
import { readPrediction } from '../../src/runner/predictions.js';
import { buildManifest } from '../../src/dataset/init.js';

const CAM = { focalPx: 500, baselineM: 0.2, cxShiftPx: 1.5 };
const W = 8;
const H = 4;
const root = mkdtempSync(join(tmpdir(), 'plx-depth-'));

/** Depths from 0.5 m to 20 m, one unknown (0 = no return). */
function depthsM(): Float32Array {
  const z = new Float32Array(W * H);
  for (let i = 0; i < z.length; i++) z[i] = 0.5 + (19.5 * i) / (z.length - 1);
  z[3] = 0;
  return z;
}

describe('depth truth round trips', () => {
  for (const [ext, unit] of [['pfm', 'm'], ['npy', 'mm'], ['png', 'mm']] as const) {
    it(`${ext} in ${unit}: d = fB/Z - cxShift, and 0 is unknown`, async () => {
      const dir = join(root, `${ext}-${unit}`);
      mkdirSync(dir, { recursive: true });
      const z = depthsM();
      const k = unit === 'mm' ? 1000 : 1;
      const stored = z.map((v) => (ext === 'png' ? (v === 0 ? NaN : Math.round(v * k)) : v * k)); // NaN is written as the PNG invalid code 0
      const data = { width: W, height: H, data: stored };
      const bytes = ext === 'pfm' ? encodePfm(data) : ext === 'npy' ? encodeNpy(data) : encodePngDisparity(data, { scale: 1, invalid: 0, bitDepth: 16 });
      writeFileSync(join(dir, `t.${ext}`), bytes);
      writeFileSync(join(dir, 'p.pfm'), encodePfm({ width: W, height: H, data: stored.map((v) => (Number.isNaN(v) ? 0 : v)) }));
      const m = { name: 'd', camera: CAM, truthKind: 'depth', depthUnit: unit, disparityRange: [0, 256], ...(ext === 'png' ? { truthEncoding: { scale: 1 } } : {}), pairs: [{ id: 'p', left: 'l.png', right: 'r.png', truth: `t.${ext}` }] };
      writeFileSync(join(dir, 'dataset.json'), JSON.stringify(m));
      const man = loadManifest(dir);
      const t = await readTruth(man, man.pairs[0]);
      const fb = CAM.focalPx * CAM.baselineM;
      for (let i = 0; i < z.length; i++) {
        if (z[i] === 0) {
          expect(t.data[i]).toBeNaN();
          continue;
        }
        const zIn = (stored[i] / k); // what the file holds, in metres
        expect(t.data[i]).toBeCloseTo(Math.fround(fb / zIn - CAM.cxShiftPx), 4);
        // and back: Z = fB / (d + cxShift)
        expect(fb / (t.data[i] + CAM.cxShiftPx)).toBeCloseTo(zIn, 3);
      }
      // Depth predictions convert the same way with the pair's camera.
      const pr = await readPrediction({ label: 'x', dir, depthUnit: unit }, { dataset: 'd', id: 'p', width: W, height: H, camera: CAM });
      for (let i = 0; i < z.length; i++) if (z[i] !== 0) expect(pr.disparity[i]).toBeCloseTo(t.data[i], 4);
      await expect(readPrediction({ label: 'x', dir, depthUnit: unit }, { dataset: 'd', id: 'p', width: W, height: H })).rejects.toThrow(/camera/);
    });
  }
});

describe('dataset init', () => {
  it('pairs by the stems the wildcards match, lists unpartnered files, turns odd stems into pair ids', () => {
    const dir = join(root, 'tree');
    for (const f of ['cam/L/frame 01_L.png', 'cam/L/frame 02_L.png', 'cam/L/lonely_L.png', 'cam/R/frame 01_R.png', 'cam/R/frame 02_R.png', 'gt/frame 01.png', 'gt/frame 02.png', 'gt/extra.png', 'masks/frame 01_edge.png', 'chassis.png']) {
      mkdirSync(join(dir, f, '..'), { recursive: true });
      writeFileSync(join(dir, f), 'x');
    }
    const r = buildManifest(dir, { left: 'cam/L/*_L.png', right: 'cam/R/*_R.png', truth: 'gt/*.png', ignore: 'chassis.png', masks: { 'dock-edge': 'masks/*_edge.png' } }, { name: 'tree', truthKind: 'depth', depthUnit: 'mm', sparseTruth: false, disparityRange: [0, 64], camera: CAM });
    expect(r.manifest.pairs.map((p) => p.id)).toEqual(['frame-01', 'frame-02']);
    expect(r.manifest.pairs[0]).toMatchObject({ left: 'cam/L/frame 01_L.png', right: 'cam/R/frame 01_R.png', truth: 'gt/frame 01.png', masks: { 'dock-edge': 'masks/frame 01_edge.png' } });
    expect(r.manifest.pairs[1].masks).toBeUndefined();
    expect(r.manifest.ignore).toBe('chassis.png');
    expect(r.unpartnered).toEqual([{ kind: 'truth', file: 'gt/extra.png' }, { kind: 'left', file: 'cam/L/lonely_L.png' }]);
    expect(() => buildManifest(dir, { left: 'cam/L/x.png', right: 'cam/R/*_R.png', truth: 'gt/*.png' }, { name: 't', truthKind: 'disparity', sparseTruth: false, disparityRange: [0, 1] })).toThrow(/--left/);
  });
});
