/**
 * Flicker (src/metrics/flicker.ts): zero for predictions equal to a moving truth, and
 * for independent Gaussian noise of sigma per frame the mean |n_b - n_a| of a N(0, 2 sigma^2)
 * difference, 2 sigma / sqrt(pi) (a textbook result: E|X| = s * sqrt(2 / pi) for X ~ N(0, s^2)).
 */
import { describe, expect, it } from 'vitest';
import { REGION_BIT } from '../../src/core/regions.js';
import { flickerBySlice } from '../../src/metrics/flicker.js';
import { plainRegionMap } from '../../src/core/regions.js';

/** A one-row region map of the built-in regions for the bits. */
function row(bits: Uint8Array): ReturnType<typeof plainRegionMap> {
  return plainRegionMap(bits.length, 1, bits);
}
import { createPrng } from '../../src/stats/prng.js';

const K = REGION_BIT.known | REGION_BIT.visible;

/** Two frames of a truth that moves (a ramp sliding by 0.7 px of disparity and growing). */
function frames(n: number): [Float32Array, Float32Array] {
  const a = Float32Array.from({ length: n }, (_, i) => 10 + (i % 97) * 0.1);
  const b = Float32Array.from(a, (d, i) => d * 1.02 + 0.7 + (i % 5) * 0.01);
  return [a, b];
}

function gaussian(rng: ReturnType<typeof createPrng>): number {
  const u = 1 - rng.next();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng.next()); // Box-Muller, common practice
}

describe('flicker', () => {
  it('is 0 when the predictions follow the truth exactly, however the scene moves', () => {
    const [ta, tb] = frames(5000);
    const bits = new Uint8Array(5000).fill(K);
    const f = flickerBySlice({ pred: ta, truth: ta, regions: row(bits) }, { pred: tb, truth: tb, regions: row(bits) });
    expect(f.known).toBe(0);
    expect(f.visible).toBe(0);
    expect(f.occluded).toBeNull(); // no pixel of that region
  });

  it('equals 2 sigma / sqrt(pi) for independent Gaussian noise per frame (within 3 %)', () => {
    const n = 40_000;
    const sigma = 0.4;
    const rng = createPrng(11);
    const [ta, tb] = frames(n);
    const pa = Float32Array.from(ta, (t) => t + sigma * gaussian(rng));
    const pb = Float32Array.from(tb, (t) => t + sigma * gaussian(rng));
    const bits = new Uint8Array(n).fill(K);
    const f = flickerBySlice({ pred: pa, truth: ta, regions: row(bits) }, { pred: pb, truth: tb, regions: row(bits) });
    const expected = (2 * sigma) / Math.sqrt(Math.PI);
    expect(Math.abs(f.known! - expected) / expected).toBeLessThan(0.03);
  });

  it('counts only pixels known in both frames with answers in both', () => {
    // Pixel 0: known in both, changes by 1 against a still truth -> |1|. Pixel 1: not known
    // in frame a. Pixel 2: no answer in frame b. Mean over the one pixel left: 1.
    const truth = Float32Array.from([5, 5, 5]);
    const f = flickerBySlice(
      { pred: Float32Array.from([5, 5, 5]), truth, regions: row(Uint8Array.from([K, 0, K])) },
      { pred: Float32Array.from([6, 9, NaN]), truth, regions: row(Uint8Array.from([K, K, K])) },
    );
    expect(f.known).toBe(1);
  });
});
