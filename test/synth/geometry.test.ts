import { describe, expect, test } from 'vitest';
import {
  boxOnFloor,
  cameraOf,
  compileGeometry,
  intersectPrimitive,
  makeRig,
  newRay,
  planeFacing,
  planeWithDisparity,
  renderPair,
  setRay,
} from '../../src/synth/index.js';
import { bytesOf, fitAffine, runPython, testScene } from './helpers.js';
import { disparityFromDepth } from '../../src/core/camera.js';

describe('truth disparity geometry', () => {
  test('a fronto-parallel plane at depth Z has d = f*B/Z everywhere', () => {
    // Source: pinhole projection in a rectified pair, x_l - x_r = f*B/Z
    // (Hartley & Zisserman 2003, ch. 6 and 9; standard rectified stereo geometry).
    for (const [Z, s, pose] of [
      [4, 0, undefined],
      [7.5, 3, undefined],
      [2.2, 0, { position: [0.3, 1.2, -1] as const, yawRad: 0.3, pitchRad: 0.1 }],
    ] as const) {
      const rig = makeRig({ width: 96, height: 72, focalPx: 80, baselineM: 0.1, cxShiftPx: s, pose });
      const scene = testScene([planeFacing(rig, Z, 0)]);
      const r = renderPair(scene, rig, { samples: 1 });
      const expected = (80 * 0.1) / Z - s; // hand formula, d = f*B/Z - s (pinhole stereo, common practice)
      expect(disparityFromDepth(cameraOf(rig), Z)).toBeCloseTo(expected, 12);
      let maxErr = 0;
      for (const d of r.truth) maxErr = Math.max(maxErr, Math.abs(d - expected));
      // float32 storage of values below 8: rounding error below 5e-7.
      expect(maxErr).toBeLessThan(1e-6);
    }
  });

  test('a slanted plane has truth affine in (x, y): least-squares residual below 1e-6 px', () => {
    // Source: for a plane n.P = 1, 1/Z is affine in the normalised image coordinates, so
    // d = f*B/Z is affine in (x, y) (known property of rectified stereo, e.g. used by
    // slanted-plane stereo methods). Fit by normal equations in float64 in this test.
    const rig = makeRig({ width: 120, height: 90, focalPx: 100, baselineM: 0.12 });
    const [alpha, beta, gamma] = [0.03, -0.012, 3.1];
    const scene = testScene([planeWithDisparity(rig, alpha, beta, gamma, 0)]);
    const r = renderPair(scene, rig, { samples: 1 });
    const fit = fitAffine(r.truth, 120, 90);
    // Disparities lie in [2, 8): float32 rounding error is at most 2.4e-7 px.
    expect(fit.maxRes).toBeLessThan(1e-6);
    expect(fit.a).toBeCloseTo(alpha, 6);
    expect(fit.b).toBeCloseTo(beta, 6);
    expect(fit.c).toBeCloseTo(gamma, 5);
  });

  test('an arbitrarily oriented rectangle seen from a yawed, pitched rig is affine too (numpy lstsq cross-check)', () => {
    // Source: same property; the fit is redone with numpy.linalg.lstsq (outside reference).
    const rig = makeRig({
      width: 112,
      height: 84,
      focalPx: 90,
      baselineM: 0.1,
      pose: { position: [0, 1.1, 0], yawRad: -0.15, pitchRad: 0.2 },
    });
    // A ramp-like rectangle given by world corners, not built from the affine formula.
    const scene = testScene([{ kind: 'rect', origin: [-30, -5, 2], u: [60, 0, 0], v: [0, 6, 40], material: 0 }]);
    const r = renderPair(scene, rig, { samples: 1 });
    let n = 0;
    for (const d of r.truth) if (Number.isFinite(d)) n++;
    expect(n).toBeGreaterThan(112 * 40); // the ramp fills the lower part of the view
    const fit = fitAffine(r.truth, 112, 84);
    expect(fit.maxRes).toBeLessThan(1e-6);
    const out = runPython(
      'python3',
      [
        'import numpy as np',
        "d = np.fromfile('d.f32', dtype='<f4').astype(np.float64).reshape(84, 112)",
        'ys, xs = np.nonzero(np.isfinite(d))',
        'A = np.stack([xs, ys, np.ones_like(xs)], 1).astype(np.float64)',
        'coef, *_ = np.linalg.lstsq(A, d[ys, xs], rcond=None)',
        'res = np.abs(A @ coef - d[ys, xs]).max()',
        "print(' '.join(repr(float(v)) for v in [*coef, res]))",
      ].join('\n'),
      { 'd.f32': bytesOf(r.truth) },
    );
    const [a, b, c, res] = out.trim().split(' ').map(Number);
    expect(res).toBeLessThan(1e-6);
    expect(fit.a).toBeCloseTo(a!, 8);
    expect(fit.b).toBeCloseTo(b!, 8);
    expect(fit.c).toBeCloseTo(c!, 6);
  });

  test('rays that hit nothing have NaN truth and are not marked occluded', () => {
    // Documented convention (src/synth/render.ts): no hit -> NaN truth, occlusion 0.
    const rig = makeRig({ width: 64, height: 48, focalPx: 60, baselineM: 0.1 });
    // A 0.4 m cube centred 3 m ahead: d = 60 * 0.1 / 2.8 = 2.143 on its front face (Z = 2.8).
    const scene = testScene([boxOnFloor([0, -0.2, 3], [0.4, 0.4, 0.4], 0)]);
    const r = renderPair(scene, rig, { samples: 1 });
    expect(Number.isNaN(r.truth[0])).toBe(true);
    expect(r.occlusion[0]).toBe(0);
    expect(r.truth[24 * 64 + 32]).toBeCloseTo(6 / 2.8, 5);
    let hits = 0;
    for (const d of r.truth) if (!Number.isNaN(d)) hits++;
    // Only the front face is seen (the camera is level with the cube centre); it spans
    // 60 * 0.4 / 2.8 = 8.6 px on a side: 8 or 9 pixel centres each way, 64 to 81 in all.
    expect(hits).toBeGreaterThanOrEqual(64);
    expect(hits).toBeLessThanOrEqual(81);
  });

  test('ray-primitive intersections, worked by hand', () => {
    const g = compileGeometry(
      testScene([
        boxOnFloor([0, -1, 5], [2, 2, 2], 0), // x in [-1, 1], y in [-1, 1], z in [4, 6]
        { kind: 'cylinder', cx: 0, cz: 10, radius: 1, y0: -2, y1: 2, material: 0 },
        { kind: 'rect', origin: [-1, -1, 20], u: [2, 0, 0], v: [0, 2, 0], material: 0 },
      ]),
    );
    const ray = newRay();
    // Box: ray from the origin along +z enters the slab z = 4 at t = 4 (hand: (4 - 0) / 1).
    expect(intersectPrimitive(g, 0, setRay(ray, [0, 0, 0], [0, 0, 1], 1e-9, Infinity))).toBe(true);
    expect(ray[8]).toBeCloseTo(4, 12);
    // Box: direction (1, 0, 2): x reaches 1 at t = 1 but z enters only at t = 2 (x = 2): miss.
    expect(intersectPrimitive(g, 0, setRay(ray, [0, 0, 0], [1, 0, 2], 1e-9, Infinity))).toBe(false);
    // Cylinder: ray along +z from the origin hits the side at z = cz - r = 9.
    expect(intersectPrimitive(g, 1, setRay(ray, [0, 0, 0], [0, 0, 1], 1e-9, Infinity))).toBe(true);
    expect(ray[8]).toBeCloseTo(9, 12);
    // Cylinder: ray offset by x = 0.6: (0.6)^2 + (z - 10)^2 = 1 -> z = 10 - 0.8 = 9.2.
    expect(intersectPrimitive(g, 1, setRay(ray, [0.6, 0, 0], [0, 0, 1], 1e-9, Infinity))).toBe(true);
    expect(ray[8]).toBeCloseTo(9.2, 12);
    // Cylinder cap: straight down from y = 5 at the axis hits the top cap y = 2 at t = 3.
    expect(intersectPrimitive(g, 1, setRay(ray, [0, 5, 10], [0, -1, 0], 1e-9, Infinity))).toBe(true);
    expect(ray[8]).toBeCloseTo(3, 12);
    // Rect: hit at z = 20 only inside [-1, 1]^2; (0.5, 0.5, 20) inside, (1.5, 0, 20) outside.
    expect(intersectPrimitive(g, 2, setRay(ray, [0, 0, 0], [0.025, 0.025, 1], 1e-9, Infinity))).toBe(true);
    expect(ray[8]).toBeCloseTo(20, 12);
    expect(intersectPrimitive(g, 2, setRay(ray, [0, 0, 0], [0.075, 0, 1], 1e-9, Infinity))).toBe(false);
    // tmax limits the search: the rect at t = 20 is not found below tmax = 19.
    expect(intersectPrimitive(g, 2, setRay(ray, [0, 0, 0], [0, 0, 1], 1e-9, 19))).toBe(false);
  });
});
