import { describe, expect, test } from 'vitest';
import { applySensor } from '../../src/synth/index.js';
import { runPython } from './helpers.js';

function flat(n: number, r: number, g: number, b: number): Float32Array {
  const a = new Float32Array(n * 3);
  for (let i = 0; i < n; i++) {
    a[i * 3] = r;
    a[i * 3 + 1] = g;
    a[i * 3 + 2] = b;
  }
  return a;
}

describe('sensor model', () => {
  test('gain, offset and gamma follow the documented formula (worked by hand)', () => {
    // v = clamp(gain*L + offset), e = v^(1/gamma), code = round(255 e); gain 1.2, offset 0.05, gamma 2:
    //   L = 0.25: v = 0.35, e = sqrt(0.35) = 0.591608, 255e = 150.86 -> 151
    //   L = 0.9:  v = 1.13 -> clamped to 1 -> 255
    //   L = 0:    v = 0.05, e = sqrt(0.05) = 0.223607, 255e = 57.02 -> 57
    const img = applySensor(flat(1, 0.25, 0.9, 0), 1, 1, { gain: 1.2, offset: 0.05, gamma: 2 }, 1);
    expect(Array.from(img.data)).toEqual([151, 255, 57]);
    // A negative offset clamps dark radiance to 0.
    const dark = applySensor(flat(1, 0, 0, 0), 1, 1, { gain: 1.2, offset: -0.1, gamma: 2 }, 1);
    expect(Array.from(dark.data)).toEqual([0, 0, 0]);
    // Gamma 1 is linear: 0.5 * 255 = 127.5 -> 128 (round half up in Math.round).
    expect(Array.from(applySensor(flat(1, 0.5, 0.2, 1), 1, 1, { gamma: 1 }, 1).data)).toEqual([128, 51, 255]);
    // 16 bit gray: BT.601 luma of (0.25, 0.25, 0.25) = 0.25 (weights sum to 1);
    // 0.25 * 65535 = 16383.75 -> 16384.
    const deep = applySensor(flat(1, 0.25, 0.25, 0.25), 1, 1, { gamma: 1, bitDepth: 16, channels: 1 }, 1);
    expect(deep.bitDepth).toBe(16);
    expect(deep.data).toBeInstanceOf(Uint16Array);
    expect(Array.from(deep.data)).toEqual([16384]);
  });

  test('the encoding table matches Math.pow to within a code across the range', () => {
    // Source: the direct formula (Math.pow) evaluated in the test.
    const n = 4096;
    const rad = new Float32Array(n * 3);
    for (let i = 0; i < n * 3; i++) rad[i] = i / (n * 3 - 1);
    const img = applySensor(rad, n, 1, { gamma: 2.2, channels: 3 }, 1);
    let worst = 0;
    for (let i = 0; i < n * 3; i++) worst = Math.max(worst, Math.abs(img.data[i] - Math.round(255 * Math.pow(rad[i], 1 / 2.2))));
    expect(worst).toBeLessThanOrEqual(1); // table interpolation may flip a rounding at .5
  });

  test('sensor noise is Gaussian with the requested sigma (scipy kstest)', () => {
    // Source: scipy.stats.kstest against N(mean, sigma) on the same samples (outside
    // reference). 16-bit output so that quantisation (1 code = 1/257 of an 8-bit code) is
    // negligible against sigma = 6 8-bit codes = 1542 16-bit codes.
    const n = 20000;
    const img = applySensor(flat(n, 0.5, 0.5, 0.5), n, 1, { gamma: 1, bitDepth: 16, channels: 1, noiseSigma: 6 }, 99);
    const data = new Float64Array(Array.from(img.data));
    const out = runPython(
      '/usr/bin/python3',
      [
        'import numpy as np',
        'from scipy import stats',
        "x = np.fromfile('x.f64', dtype='<f8')",
        'mu = 0.5 * 65535',
        'sigma = 6 * 65535 / 255',
        'p = stats.kstest(x, "norm", args=(mu, sigma)).pvalue',
        "print(repr(float(p)), repr(float(x.mean())), repr(float(x.std())))",
      ].join('\n'),
      { 'x.f64': new Uint8Array(data.buffer) },
    );
    const [p, mean, std] = out.trim().split(' ').map(Number);
    expect(p).toBeGreaterThan(0.001);
    expect(Math.abs(mean! - 32767.5)).toBeLessThan(5 * (1542 / Math.sqrt(n)));
    expect(Math.abs(std! / 1542 - 1)).toBeLessThan(0.03);
    // Different seeds give different noise; the same seed the same.
    const again = applySensor(flat(n, 0.5, 0.5, 0.5), n, 1, { gamma: 1, bitDepth: 16, channels: 1, noiseSigma: 6 }, 99);
    const other = applySensor(flat(n, 0.5, 0.5, 0.5), n, 1, { gamma: 1, bitDepth: 16, channels: 1, noiseSigma: 6 }, 100);
    expect(Array.from(again.data)).toEqual(Array.from(img.data));
    expect(Array.from(other.data)).not.toEqual(Array.from(img.data));
  });
});
