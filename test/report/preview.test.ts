import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { downscaleNanMean, previewPath, readPreview, slug, writePreview } from '../../src/report/preview.js';

const dirs: string[] = [];
afterAll(async () => {
  for (const d of dirs) await rm(d, { recursive: true, force: true });
});

describe('previews', () => {
  it('block mean skips NaN (hand-computed 4x2 -> 2x1 at factor 2)', () => {
    const img = { width: 4, height: 2, data: Float32Array.from([1, 2, NaN, NaN, 3, NaN, NaN, NaN]) };
    const s = downscaleNanMean(img, 2);
    expect([s.width, s.height]).toEqual([2, 1]);
    // Block 1: 1, 2, 3 valid -> mean 2; block 2: nothing valid -> NaN.
    expect(s.data[0]).toBeCloseTo(2, 6);
    expect(Number.isNaN(s.data[1])).toBe(true);
  });

  it('slug keeps safe names and separates unsafe ones that would collide', () => {
    expect(slug('block')).toBe('block');
    expect(slug('sgm:p2=96')).not.toBe(slug('sgm_p2_96'));
    expect(slug('../../etc')).toMatch(/^[A-Za-z0-9._-]+$/);
    expect(slug('../../etc').startsWith('.')).toBe(false);
    expect(slug('<img src=x onerror=alert(1)>')).toMatch(/^[A-Za-z0-9._-]+$/);
  });

  it('writes a downscaled PFM under previews/ and reads it back; a missing one is null', async () => {
    const run = await mkdtemp(join(tmpdir(), 'plx-prev-'));
    dirs.push(run);
    const w = 600;
    const h = 20;
    const data = new Float32Array(w * h);
    for (let i = 0; i < data.length; i++) data[i] = (i % w) / 10;
    await writePreview(run, 'sgm:p2=96', 'dock', 'p01', { width: w, height: h, data });
    expect(previewPath(run, 'sgm:p2=96', 'dock', 'p01').startsWith(join(run, 'previews'))).toBe(true);
    const back = (await readPreview(run, 'sgm:p2=96', 'dock', 'p01'))!;
    // 600 px wide -> factor ceil(600/256) = 3 -> 200 x 7 (ceil(20/3)).
    expect([back.width, back.height]).toEqual([200, 7]);
    // First block: x = 0,1,2 -> values 0, 0.1, 0.2 -> mean 0.1 (by hand).
    expect(back.data[0]).toBeCloseTo(0.1, 5);
    expect(await readPreview(run, 'sgm', 'dock', 'nope')).toBeNull();
  });
});
