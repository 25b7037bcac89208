/**
 * Sub-pixel honesty (src/metrics/subpixel.ts): worked examples of subpix_lock, the
 * histograms against numpy, and the pixel-locking of a parabola sub-pixel fit on a
 * rendered slanted plane (a known effect of fitting a parabola to a cost curve: common
 * practice).
 */
import { describe, expect, it } from 'vitest';
import { toLuminance } from '../../src/core/image.js';
import { REGION_BIT } from '../../src/core/regions.js';
import { subpixelBySlice } from '../../src/metrics/subpixel.js';
import { plainRegionMap } from '../../src/core/regions.js';

/** A one-row region map of the built-in regions for the bits. */
function flatMap(bits: Uint8Array): ReturnType<typeof plainRegionMap> {
  return plainRegionMap(bits.length, 1, bits);
}
import { blockMatch } from '../../matchers/block/index.js';
import { makeRig, planeWithDisparity, renderPair } from '../../src/synth/index.js';
import { testScene } from '../synth/helpers.js';
import { closeRel, rng, runNumpy } from './helpers.js';

const K = REGION_BIT.known | REGION_BIT.visible;

describe('subpix_lock', () => {
  it('is 0 for fractions spread evenly and 1 for whole-pixel disparities (worked examples)', () => {
    // Fractions 0, 0.1, ..., 0.9: the ten unit vectors exp(2 pi i k / 10) sum to 0.
    const even = Float32Array.from({ length: 10 }, (_, k) => 5 + k / 10);
    const truth = Float32Array.from(even, (d) => d + 0.05);
    const bits = new Uint8Array(10).fill(K);
    expect(subpixelBySlice(even, truth, flatMap(bits)).known!.subpix_lock).toBeLessThan(1e-6);
    // Whole numbers: every vector is 1.
    const whole = Float32Array.from([3, 7, 12, 40, 2]);
    expect(subpixelBySlice(whole, whole, flatMap(new Uint8Array(5).fill(K))).known!.subpix_lock).toBeCloseTo(1, 12);
    // Half the pixels at .0 and half at .5: the vectors cancel, 0.
    const halves = Float32Array.from([1, 1.5, 2, 2.5]);
    expect(subpixelBySlice(halves, halves, flatMap(new Uint8Array(4).fill(K))).known!.subpix_lock).toBeLessThan(1e-12);
    // A disparity just below a whole number whose fraction rounds to 1 (float64) counts as 0.
    const tiny = subpixelBySlice(Float32Array.from([-1e-20, 0]), Float32Array.from([-1e-20, 0]), flatMap(new Uint8Array(2).fill(K))).known!;
    expect(tiny.frac_hist).toEqual([2, 0, 0, 0, 0, 0, 0, 0, 0, 0]);
    expect(tiny.subpix_lock).toBeCloseTo(1, 12);
  });

  it('histograms equal numpy: fractions of the predictions, mean |error| by the truth fraction', () => {
    const r = rng(3);
    const n = 4000;
    const truth = Float32Array.from({ length: n }, () => 2 + 40 * r());
    const pred = Float32Array.from(truth, (t) => (r() < 0.1 ? NaN : Math.round(t) + (r() - 0.5) * 0.4));
    const bits = Uint8Array.from({ length: n }, () => (r() < 0.7 ? K : REGION_BIT.known | REGION_BIT.occluded));
    const got = subpixelBySlice(pred, truth, flatMap(bits)).visible!;
    const ref = runNumpy(
      { truth, pred, bits },
      `t = load("truth", np.float32).astype(np.float64); p = load("pred", np.float32).astype(np.float64); b = load("bits", np.uint8)
m = ((b & ${REGION_BIT.visible}) != 0) & np.isfinite(p) & np.isfinite(t)
fp = np.minimum(np.floor((p[m] - np.floor(p[m])) * 10), 9).astype(int)
ft = np.minimum(np.floor((t[m] - np.floor(t[m])) * 10), 9).astype(int)
e = np.abs(p[m] - t[m])
hist = np.bincount(fp, minlength=10)
err = [float(e[ft == k].mean()) if (ft == k).any() else None for k in range(10)]
lock = abs(np.exp(2j * np.pi * p[m]).sum()) / m.sum()
print(json.dumps({"hist": hist.tolist(), "err": err, "lock": float(lock)}))`,
    );
    expect(got.frac_hist).toEqual(ref.hist);
    got.err_by_truth_frac!.forEach((v, k) => expect(closeRel(v!, ref.err[k], 1e-9), `bin ${k}`).toBe(true));
    expect(closeRel(got.subpix_lock!, ref.lock, 1e-9)).toBe(true);
  });

  it('shows the parabola fit pulling block matching towards whole pixels on a rendered slanted plane', () => {
    // d = 10 + 0.05 x over 160 columns: the truth's fractions sweep [0, 1) eight times, evenly.
    const W = 160;
    const H = 96;
    const rig = makeRig({ width: W, height: H, focalPx: 120, baselineM: 0.1 });
    const r = renderPair(testScene([planeWithDisparity(rig, 0.05, 0, 10, 0)]), rig, { samples: 1 });
    const pred = blockMatch(
      { width: W, height: H, left: toLuminance(r.left), right: toLuminance(r.right), minDisparity: 0, maxDisparity: 24 },
      { window: 9, subpix: true, lr: 0, kernel: 'ts' },
    );
    const bits = new Uint8Array(W * H).fill(K);
    const truthLock = subpixelBySlice(r.truth, r.truth, flatMap(bits)).known!.subpix_lock;
    const predFig = subpixelBySlice(pred, r.truth, flatMap(bits)).known!;
    // Measured here: the truth's lock is 3e-16 and block matching's 0.10 (window 9, parabola fit).
    expect(truthLock).toBeLessThan(0.01);
    expect(predFig.subpix_lock).toBeGreaterThan(0.05);
  }, 30_000);
});
