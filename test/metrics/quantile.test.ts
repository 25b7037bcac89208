import { describe, expect, it } from 'vitest';
import { lerpNumpy, quantileLinear, quantilesLinear, selectInPlace } from '../../src/metrics/quantile.js';
import { rng, runNumpy } from './helpers.js';

const QS = [0, 0.01, 0.25, 0.5, 0.75, 0.9, 0.99, 1];

describe('quantilesLinear', () => {
  it('worked examples by hand (type-7 / numpy linear: h = (n-1)q, interpolate)', () => {
    // [4, 1, 3, 2] sorted = [1, 2, 3, 4]; q=0.5: h = 3*0.5 = 1.5 -> 2 + 0.5*(3-2) = 2.5
    expect(quantileLinear(Float64Array.of(4, 1, 3, 2), 4, 0.5)).toBe(2.5);
    // q=0.25: h = 0.75 -> 1 + 0.75*(2-1) = 1.75 (hand arithmetic)
    expect(quantileLinear(Float64Array.of(4, 1, 3, 2), 4, 0.25)).toBe(1.75);
    // q=1: h = 3 -> the maximum, 4; q=0: h=0 -> the minimum, 1
    expect(quantilesLinear(Float64Array.of(4, 1, 3, 2), 4, [1, 0])).toEqual([4, 1]);
    // n = 1: every quantile is the single value
    expect(quantilesLinear(Float64Array.of(7), 1, [0, 0.5, 0.99])).toEqual([7, 7, 7]);
    // n = 2, [5, 1]: q=0.9 -> h = 0.9 -> 1 + 0.9*(5-1) = 4.6; numpy's lerp for g >= 0.5
    // computes b - (b-a)(1-g) = 5 - 4*0.1 (hand: 4.6 up to float rounding of 0.1)
    expect(quantileLinear(Float64Array.of(5, 1), 2, 0.9)).toBeCloseTo(4.6, 14);
    // only the first n values count: [3, 1, 100] with n = 2 -> median 2
    expect(quantileLinear(Float64Array.of(3, 1, 100), 2, 0.5)).toBe(2);
    // n = 0 -> NaN (documented)
    expect(quantilesLinear(new Float64Array(0), 0, [0.5])[0]).toBeNaN();
  });

  it('rejects q outside [0, 1] and n beyond the buffer (common practice: fail loudly)', () => {
    expect(() => quantilesLinear(Float64Array.of(1), 1, [1.5])).toThrow(RangeError);
    expect(() => quantilesLinear(Float64Array.of(1), 2, [0.5])).toThrow(RangeError);
  });

  it('lerpNumpy is exact at both ends (numpy _lerp: a at g=0, b at g=1)', () => {
    expect(lerpNumpy(0.1, 0.7, 0)).toBe(0.1);
    expect(lerpNumpy(0.1, 0.7, 1)).toBe(0.7);
  });

  it('selectInPlace partitions around rank k (definition of selection), many duplicates', () => {
    const r = rng(7);
    for (let trial = 0; trial < 30; trial++) {
      const n = 1 + Math.floor(r() * 3000);
      const a = new Float64Array(n);
      for (let i = 0; i < n; i++) a[i] = Math.floor(r() * (trial % 3 === 0 ? 3 : 1000));
      const sorted = Float64Array.from(a).sort();
      const k = Math.floor(r() * n);
      selectInPlace(a, 0, n - 1, k);
      expect(a[k]).toBe(sorted[k]);
      let ok = true;
      for (let i = 0; i < k; i++) if (!(a[i] <= a[k])) ok = false;
      for (let i = k + 1; i < n; i++) if (!(a[i] >= a[k])) ok = false;
      expect(ok, `trial ${trial}: not partitioned around rank ${k}`).toBe(true);
    }
  });

  it('agrees with numpy np.quantile (default method linear) on random data, float64 and float32', () => {
    const r = rng(42);
    const sizes = [1, 2, 3, 5, 10, 101, 1000, 4097, 20000];
    const files: Record<string, ArrayBufferView> = {};
    const mine: Record<string, number[]> = {};
    sizes.forEach((n, s) => {
      const a = new Float64Array(n);
      const kind = s % 3;
      for (let i = 0; i < n; i++) {
        // kind 0: continuous, kind 1: heavy duplicates, kind 2: sorted descending runs
        a[i] = kind === 0 ? r() * 10 : kind === 1 ? Math.floor(r() * 4) * 0.25 : (n - i) * 0.5 + Math.floor(r() * 2);
      }
      files[`f64_${s}`] = Float64Array.from(a);
      mine[`f64_${s}`] = quantilesLinear(Float64Array.from(a), n, QS);
      const f = Float32Array.from(a, (v) => v * 1.37);
      files[`f32_${s}`] = Float32Array.from(f);
      mine[`f32_${s}`] = quantilesLinear(Float32Array.from(f), n, QS);
    });
    const script = `
qs = ${JSON.stringify(QS)}
out = {}
for s in range(${sizes.length}):
    out['f64_%d' % s] = [float(v) for v in np.quantile(load('f64_%d' % s, '<f8'), qs)]
    # float32 data widened to float64 first, as our scorer's |e| buffers are float64
    out['f32_%d' % s] = [float(v) for v in np.quantile(load('f32_%d' % s, '<f4').astype(np.float64), qs)]
print(json.dumps(out))
`;
    const ref = runNumpy(files, script);
    for (const key of Object.keys(mine)) {
      const a = mine[key];
      const b = ref[key] as number[];
      for (let i = 0; i < QS.length; i++) {
        // same order statistics and numpy's own lerp: expect equality to 1e-12 relative
        expect(Math.abs(a[i] - b[i]) <= 1e-12 * Math.max(1, Math.abs(b[i])), `${key} q=${QS[i]}: ${a[i]} vs ${b[i]}`).toBe(true);
      }
    }
  });
});
