import { expect, test } from 'vitest';
import { boxOnFloor, makeRig, planeWithDisparity, renderPair } from '../../src/synth/index.js';
import { luma, testScene } from './helpers.js';

/**
 * Mean absolute difference between the left image and the right image sampled at
 * (x - d - shift, y) with bilinear interpolation (along x only: rows are rectified), over
 * visible pixels away from truth discontinuities (|d - d_neighbour| > 0.5 within 2 px).
 */
function warpError(
  r: ReturnType<typeof renderPair>,
  shift: number,
): { mad: number; n: number } {
  const W = r.width;
  const H = r.height;
  const L = luma(r.left);
  const R = luma(r.right);
  let sum = 0;
  let n = 0;
  for (let y = 2; y < H - 2; y++) {
    for (let x = 2; x < W - 2; x++) {
      const i = y * W + x;
      if (r.occlusion[i]) continue;
      const d = r.truth[i];
      let edge = false;
      for (let dy = -2; dy <= 2 && !edge; dy++) for (let dx = -2; dx <= 2; dx++) if (Math.abs(r.truth[i + dy * W + dx] - d) > 0.5) edge = true;
      if (edge) continue;
      const xr = x - d - shift;
      const x0 = Math.floor(xr);
      if (x0 < 0 || x0 + 1 >= W) continue;
      const w = xr - x0;
      const v = R[y * W + x0] * (1 - w) + R[y * W + x0 + 1] * w;
      sum += Math.abs(v - L[i]);
      n++;
    }
  }
  return { mad: sum / n, n };
}

test('warping the noise-free right image by the truth reproduces the left image on visible pixels', () => {
  // Source: definition of left-referenced disparity, I_L(x, y) = I_R(x - d, y) for a
  // Lambertian (view-independent) surface seen by both cameras (e.g. Scharstein & Szeliski
  // 2002, section 2). Tolerance: both images are 3x3 box-filtered samples of the same
  // texture, so residual differences come from bilinear interpolation of band-limited
  // texture and the jitter (two independent roundings alone give a mean of 1/3 code); we allow a
  // mean of 1 code (of 255) and demand that a
  // half-pixel or larger mis-registration is clearly worse (a control that must fail).
  const rig = makeRig({ width: 160, height: 120, focalPx: 140, baselineM: 0.12 });
  const scene = testScene([
    planeWithDisparity(rig, 0.02, 0.01, 4, 0),
    // A box in front, so the check also runs next to real occlusions.
    boxOnFloor([-0.2, -0.3, 1.6], [0.4, 0.5, 0.3], 0),
  ]);
  const r = renderPair(scene, rig, { samples: 3, left: { noiseSigma: 0 }, right: { noiseSigma: 0 } });
  let occluded = 0;
  for (const o of r.occlusion) occluded += o;
  expect(occluded).toBeGreaterThan(100); // the box occludes part of the plane
  const ok = warpError(r, 0);
  expect(ok.n).toBeGreaterThan(0.7 * 156 * 116);
  expect(ok.mad).toBeLessThan(1);
  // Controls: mis-registered warps must be clearly worse.
  const off = warpError(r, 0.75);
  expect(off.mad).toBeGreaterThan(2 * ok.mad);
  const flipped = warpError({ ...r, truth: r.truth.map((d) => -d) }, 0);
  expect(flipped.mad).toBeGreaterThan(3 * ok.mad);
  console.log(`warp mean abs diff ${ok.mad.toFixed(3)} codes (0.75 px off: ${off.mad.toFixed(3)}) over ${ok.n} px`);
});
