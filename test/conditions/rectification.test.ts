/**
 * The rectification and photometric estimate of `dataset check`, on pairs with a known
 * fault:
 * - vertical misalignment rendered by the scene renderer itself (the right camera's
 *   principal point moved down by 0, 0.3, 0.7 and 1.5 px: every point projects exactly
 *   that much lower, from the pinhole model y = cy + f Y / Z), so no resampling of ours
 *   is involved; required within ±0.1 px;
 * - rotation: the right image turned by a known angle about its centre with the
 *   `rotate` condition, whose warp equals OpenCV's warpAffine (kernels.test.ts);
 *   required within 20 %;
 * - gain: the `gain` condition (values multiplied); required within 5 %.
 * And the command's JSON: `dataset check --json` gives pairs[].id, vshift_px,
 * vshift_spread_px and gain, and warns on a misaligned pair.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { dockScene } from '../../src/synth/dock.js';
import { rigForScene } from '../../src/synth/rig.js';
import { renderPair, type StereoRender } from '../../src/synth/render.js';
import { estimateRectification } from '../../src/dataset/rectification.js';
import { toLuminance } from '../../src/core/image.js';
import { applyCondition } from '../../src/conditions/apply.js';
import type { LoadedPair } from '../../src/core/pair.js';
import { checkDataset } from '../../src/dataset/check.js';
import { writeRenderedDataset } from './helpers.js';

const W = 320;
const H = 240;
const RANGE = { minDisparity: 0, maxDisparity: 40 };

function render(variant: 'crates' | 'ramp' | 'shelving', cyShiftPx: number): StereoRender {
  const scene = dockScene(variant, 3);
  return renderPair(scene, rigForScene(scene, { width: W, height: H, cyShiftPx }), { samples: 2, seed: 5 });
}

function asPair(r: StereoRender): LoadedPair {
  const file = '/nonexistent';
  return {
    dataset: 't',
    id: 'p',
    width: r.width,
    height: r.height,
    left: r.left,
    right: r.right,
    leftGray: toLuminance(r.left),
    rightGray: toLuminance(r.right),
    truth: { width: r.width, height: r.height, data: r.truth },
    disparityRange: [RANGE.minDisparity, RANGE.maxDisparity],
    files: { id: 'p', left: file, right: file, truth: file },
  };
}

const estimate = (p: LoadedPair): ReturnType<typeof estimateRectification> => estimateRectification(p.leftGray, p.rightGray, p.width, p.height, RANGE);

describe('vertical misalignment', () => {
  it.each([
    ['crates', 0],
    ['crates', 0.3],
    ['crates', 0.7],
    ['crates', 1.5],
    ['ramp', 0.3],
    ['shelving', 0.7],
    ['ramp', -0.7],
  ] as const)('%s rendered with the right camera %s px lower: estimated within 0.1 px', (variant, shift) => {
    const e = estimate(asPair(render(variant, shift)));
    // Shelving's long horizontal edges leave few windows a translation explains (11 here); the others keep hundreds.
    expect(e.points).toBeGreaterThan(variant === 'shelving' ? 8 : 100);
    expect(Math.abs(e.vshift_px! - shift)).toBeLessThan(0.1);
    // A pure shift has no rotation: the field is flat over the image.
    expect(e.vshift_spread_px!).toBeLessThan(0.1);
  });

  it.each([2, -3])('a rotation of %s mrad is recovered within 20 %', (mrad) => {
    const e = estimate(applyCondition(asPair(render('crates', 0)), `rotate=${mrad}`, 1));
    expect(Math.abs(e.rotation_mrad! - mrad)).toBeLessThan(0.2 * Math.abs(mrad));
    // Half the range of a rotation's vertical field over the image: |theta| (W - 1) / 2.
    expect(e.vshift_spread_px!).toBeCloseTo((Math.abs(mrad) / 1000) * ((W - 1) / 2), 1);
  });
});

describe('photometric difference', () => {
  it.each([
    ['crates', 1.2],
    ['ramp', 0.85],
    ['crates', 1],
  ] as const)('%s with the right camera gain %s: estimated within 5 %', (variant, gain) => {
    const e = estimate(applyCondition(asPair(render(variant, 0)), gain === 1 ? 'clean' : `gain=${gain}`, 1));
    expect(Math.abs(e.gain! - gain)).toBeLessThan(0.05 * gain);
  });
});

describe('dataset check', () => {
  it('gives the per-pair figures and warns on a misaligned pair only', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'plx-rect-'));
    try {
      await writeRenderedDataset(dir, [
        { id: 'aligned', render: render('crates', 0) },
        { id: 'low', render: render('crates', 0.7) },
      ]);
      const report = await checkDataset(dir);
      expect(report.problems).toEqual([]);
      expect(report.pairs.map((p) => p.id)).toEqual(['aligned', 'low']);
      const [aligned, low] = report.pairs;
      expect(Math.abs(aligned.vshift_px!)).toBeLessThan(0.1);
      expect(Math.abs(low.vshift_px! - 0.7)).toBeLessThan(0.1);
      expect(typeof low.vshift_spread_px).toBe('number');
      expect(Math.abs(low.gain! - 1)).toBeLessThan(0.05);
      expect(report.warnings).toHaveLength(1);
      expect(report.warnings[0]).toMatch(/rows misaligned: the right image's content sits 0\.\d\d px lower than the left's.*pair low/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
