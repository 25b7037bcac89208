/** Rendered pairs written as a dataset folder (PNG images, PFM truth, dataset.json) for the condition tests. */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { encodePfm } from '../../src/io/pfm.js';
import { encodePng } from '../../src/io/png.js';
import type { StereoRender } from '../../src/synth/render.js';

export async function writeRenderedDataset(dir: string, pairs: readonly { id: string; render: StereoRender }[], disparityRange: [number, number] = [0, 40]): Promise<void> {
  for (const { id, render: r } of pairs) {
    mkdirSync(join(dir, id), { recursive: true });
    writeFileSync(join(dir, id, 'left.png'), encodePng(r.left));
    writeFileSync(join(dir, id, 'right.png'), encodePng(r.right));
    writeFileSync(join(dir, id, 'truth.pfm'), encodePfm({ width: r.width, height: r.height, data: r.truth }));
  }
  const cam = pairs[0].render.camera;
  const manifest = {
    name: 'dock-faults',
    camera: { focalPx: cam.focalPx, baselineM: cam.baselineM, cxShiftPx: cam.cxShiftPx },
    disparityRange,
    pairs: pairs.map(({ id }) => ({ id, left: `${id}/left.png`, right: `${id}/right.png`, truth: `${id}/truth.pfm` })),
  };
  writeFileSync(join(dir, 'dataset.json'), JSON.stringify(manifest, null, 2));
  return Promise.resolve();
}
