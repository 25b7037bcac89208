import { describe, expect, it } from 'vitest';
import { scorePair, figuresFromSums, addSums, emptySums } from '../../src/metrics/score.js';
import { buildRegions } from '../../src/dataset/regions.js';
import { depthFromDisparity } from '../../src/core/camera.js';
import { DEFAULT_REGION_PARAMS, REGION_BIT, REGION_IDS, plainRegionMap, type RegionMap } from '../../src/core/regions.js';
import { closeRel, rng, runNumpy } from './helpers.js';

const K = REGION_BIT.known;
const V = REGION_BIT.visible;

function map(bits: number[]): RegionMap {
  return plainRegionMap(bits.length, 1, Uint8Array.from(bits));
}

describe('scorePair worked examples (arithmetic by hand in the comments)', () => {
  it('invalid prediction, error equal to a threshold (strict >), empty regions', () => {
    // truth [2, 2, 2], pred [3, NaN, 2.5]; all three pixels known+visible.
    // e = [1, -, 0.5]. pixels 3, valid 2, coverage 200/3 %.
    // epe = (1 + 0.5)/2 = 0.75; rmse = sqrt((1 + 0.25)/2) = sqrt(0.625); bias = 0.75.
    // over1px: |1| > 1 no (strict), 0.5 no, NaN = bad -> 1 of 3 = 33.33 %.
    // over0.5px: 1 > 0.5 yes, 0.5 > 0.5 no, NaN bad -> 2 of 3 = 66.67 %.
    // Quantiles of [0.5, 1], numpy's linear method: value at h = (n - 1) p = p, so
    // q(p) = 0.5 + 0.5 p: q50 -> 0.75, q68 -> 0.84, q75 -> 0.875, q95 -> 0.975, q99 -> 0.995.
    const s = scorePair(Float32Array.of(3, NaN, 2.5), Float32Array.of(2, 2, 2), map([K | V, K | V, K | V]), {
      thresholds: [1, 0.5],
      quantiles: [50, 68, 75, 95, 99],
    });
    const f = s.visible.figures;
    expect(f.pixels).toBe(3);
    expect(f.coverage).toBeCloseTo(200 / 3, 12);
    expect(f.epe).toBe(0.75);
    expect(f.rmse).toBe(Math.sqrt(0.625));
    expect(f.bias).toBe(0.75);
    expect(f.rates[0]).toBeCloseTo(100 / 3, 12);
    expect(f.rates[1]).toBeCloseTo(200 / 3, 12);
    expect(s.visible.sums.bad).toEqual([1, 2]);
    expect(f.quantiles[0]).toBe(0.75);
    expect(f.quantiles[1]).toBeCloseTo(0.84, 15);
    expect(f.quantiles[2]).toBe(0.875);
    expect(f.quantiles[3]).toBeCloseTo(0.975, 15);
    expect(f.quantiles[4]).toBeCloseTo(0.995, 15);
    expect(s.known.figures).toEqual(f); // same pixels
    // occluded / flat / jump have no pixels: every figure null (README, "Empty regions")
    for (const id of ['occluded', 'flat', 'jump'] as const) {
      const g = s[id].figures;
      expect(g.pixels).toBe(0);
      expect([g.coverage, g.epe, g.rmse, g.bias, g.depth_relerr, g.depth_rmse_m]).toEqual([null, null, null, null, null, null]);
      expect(g.quantiles).toEqual([null, null, null, null, null]);
      expect(g.rates).toEqual([null, null]);
    }
    // no camera -> depth figures null
    expect(f.depth_relerr).toBeNull();
  });

  it('infinite prediction is invalid; infinite truth is not known (region builder)', () => {
    // truth [2, Inf, 4, 1], pred [2, 5, Inf, -Inf]; region bits from buildRegions with
    // no occlusion, no jumps (gap 100), no flat (threshold 0).
    // known: x=0, 2, 3 (Inf truth dropped). valid: only x=0 (e=0). pixels 3, coverage 33.33 %.
    // over1px: x=2, x=3 invalid -> bad 2 -> 66.67 %. epe 0, bias 0, q50 0.
    const truth = Float32Array.of(2, Infinity, 4, 1);
    const regions = buildRegions({ truth, leftGray: new Float32Array(4), occlusion: new Uint8Array(4), width: 4, height: 1 }, {
      ...DEFAULT_REGION_PARAMS,
      jumpGap: 100,
      flatThreshold: 0,
    });
    expect(Array.from(regions.bits)).toEqual([K | V, 0, K | V, K | V]);
    const s = scorePair(Float32Array.of(2, 5, Infinity, -Infinity), truth, regions, { thresholds: [1], quantiles: [50, 99] });
    const f = s.known.figures;
    expect(f.pixels).toBe(3);
    expect(s.known.sums.valid).toBe(1);
    expect(f.coverage).toBeCloseTo(100 / 3, 12);
    expect(f.rates[0]).toBeCloseTo(200 / 3, 12);
    expect([f.epe, f.bias, f.rmse, ...f.quantiles]).toEqual([0, 0, 0, 0, 0]);
  });

  it('failed job (pred null): coverage 0, every rate 100, error figures null (README, "Failed jobs")', () => {
    const s = scorePair(null, Float32Array.of(1, 2, 3), map([K | V, K | V, K | REGION_BIT.occluded]), {
      thresholds: [0.5, 3],
      quantiles: [50, 68, 95],
    });
    for (const id of ['known', 'visible', 'occluded'] as const) {
      const f = s[id].figures;
      expect(f.coverage).toBe(0);
      expect(f.rates).toEqual([100, 100]);
      expect([f.epe, f.rmse, f.bias, ...f.quantiles]).toEqual([null, null, null, null, null, null]);
    }
    expect(s.known.figures.pixels).toBe(3);
    expect(s.occluded.figures.pixels).toBe(1);
  });

  it('thresholds in any order, duplicates allowed; rates follow the caller order', () => {
    // truth 0, pred [0.3, 0.6, 1.5, 2.5]: |e| = 0.3, 0.6, 1.5, 2.5 (float32 -> float64 exact
    // enough for these comparisons: 0.3f = 0.30000001192..., 0.6f = 0.60000002384...).
    // over2: 1 (2.5); over0.25: 4; over1: 2; over0.25 again: 4.
    const s = scorePair(Float32Array.of(0.3, 0.6, 1.5, 2.5), new Float32Array(4), map([K, K, K, K]), {
      thresholds: [2, 0.25, 1, 0.25],
      quantiles: [],
    });
    expect(s.known.sums.bad).toEqual([1, 4, 2, 4]);
    expect(s.known.figures.rates).toEqual([25, 100, 50, 100]);
  });

  it('depth from disparity: Z = f*B/(d + cxShift) (pinhole stereo), relative and RMS error', () => {
    // f = 700 px, B = 0.12 m -> f*B = 84. Truth d = 42 -> Zt = 84/42 = 2.0 m.
    expect(depthFromDisparity({ focalPx: 700, baselineM: 0.12, cxShiftPx: 0 }, 42)).toBeCloseTo(2.0, 14);
    // with cxShift = 2 and d = 40: Z = 84/(40 + 2) = 2.0 m
    expect(depthFromDisparity({ focalPx: 700, baselineM: 0.12, cxShiftPx: 2 }, 40)).toBeCloseTo(2.0, 14);
    // d + cxShift <= 0 -> NaN (no positive depth); NaN disparity -> NaN
    expect(depthFromDisparity({ focalPx: 700, baselineM: 0.12, cxShiftPx: 2 }, -2)).toBeNaN();
    expect(depthFromDisparity({ focalPx: 700, baselineM: 0.12, cxShiftPx: 0 }, NaN)).toBeNaN();

    const cam = { focalPx: 700, baselineM: 0.12, cxShiftPx: 2 };
    // pixel 0: truth 40 (Zt = 2.0), pred 40 -> dZ = 0.
    // pixel 1: truth 40 (Zt = 2.0), pred 38 -> Zp = 84/(38 + 2) = 2.1, dZ = 0.1,
    //          rel = 0.1/2 = 0.05, sq = 0.01.
    // pixel 2: truth 40, pred -3 -> d + shift = -1 <= 0 -> depth failure (not in means).
    // pixel 3: truth 40, pred -2 -> d + shift = 0 -> failure too.
    // pixel 4: truth -2 -> d + shift = 0 <= eps -> skipped for depth (disparity errors still count).
    // pixel 5: truth 40, pred NaN -> invalid, left out of depth.
    // depth_relerr = (0 + 0.05)/2 = 0.025; depth_rmse_m = sqrt((0 + 0.01)/2) = sqrt(0.005).
    const truth = Float32Array.of(40, 40, 40, 40, -2, 40);
    const pred = Float32Array.of(40, 38, -3, -2, 5, NaN);
    const s = scorePair(pred, truth, map([K, K, K, K, K, K]), { thresholds: [1], quantiles: [], camera: cam });
    const sums = s.known.sums;
    expect(sums.depthCount).toBe(2);
    expect(sums.depthFail).toBe(2);
    expect(s.known.figures.depth_relerr).toBeCloseTo(0.025, 14);
    expect(s.known.figures.depth_rmse_m).toBeCloseTo(Math.sqrt(0.005), 14);
    // a region whose only pixels fail or are skipped has null depth figures
    const s2 = scorePair(Float32Array.of(-3), Float32Array.of(40), map([K]), { thresholds: [1], quantiles: [], camera: cam });
    expect(s2.known.sums.depthFail).toBe(1);
    expect(s2.known.figures.depth_relerr).toBeNull();
  });

  it('figuresFromSums of added sums = figures of the concatenated pixels (pooling identity)', () => {
    // Two tiny pairs: pooled epe = total |e| / total valid (README, "Aggregates over pairs").
    const set = { thresholds: [2], quantiles: [50] };
    const a = scorePair(Float32Array.of(1, 3), Float32Array.of(0, 0), map([K, K]), set);
    const b = scorePair(Float32Array.of(NaN, 0.5), Float32Array.of(0, 0), map([K, K]), set);
    const pooled = figuresFromSums(addSums(addSums(emptySums(1), a.known.sums), b.known.sums), set, null);
    // |e| = 1, 3, 0.5 over 3 valid -> epe 1.5; bad(>2) = {3, NaN} = 2 of 4 -> 50 %
    expect(pooled.epe).toBe(1.5);
    expect(pooled.rates).toEqual([50]);
    expect(pooled.coverage).toBe(75);
    expect(pooled.quantiles).toEqual([null]); // no pooled quantiles
  });
});

describe('scorePair against an independent numpy implementation', () => {
  const W = 131;
  const H = 97;
  const THRESH = [2, 0.25, 1, 3, 0.5, 1];
  const CAM = { focalPx: 700, baselineM: 0.12, cxShiftPx: 1.5 };
  const QUANT = [50, 68, 75, 95, 99]; // the numpy script asks for the same levels / 100

  function makeCase(seed: number, emptyJump: boolean) {
    const r = rng(seed);
    const n = W * H;
    const truth = new Float32Array(n);
    const pred = new Float32Array(n);
    const bits = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      const x = i % W;
      let t = ((x >> 4) % 3) * 8 + 0.05 * (i / W) + r() * 0.1;
      if (r() < 0.02) t = -1.5; // d + shift = 0 -> skipped for depth
      if (r() < 0.01) t = -3; // d + shift < 0
      if (r() < 0.04) t = NaN; // hole in truth
      if (r() < 0.01) t = r() < 0.5 ? Infinity : -Infinity;
      truth[i] = t;
      const u = r();
      let p: number;
      if (u < 0.08) p = NaN; // hole in the prediction
      else if (u < 0.09) p = r() < 0.5 ? Infinity : -Infinity;
      else if (u < 0.15) p = Math.round(t) + [0.25, 0.5, 1, 2, 3][Math.floor(r() * 5)]; // errors on thresholds
      else if (u < 0.17) p = -1.5 - r() * 3; // depth failures (d + shift <= 0)
      else p = t + (r() - 0.5) * (r() < 0.2 ? 12 : 1.5);
      pred[i] = p;
      if (u >= 0.09 && u < 0.15) truth[i] = Math.round(t); // exact: integer truth, pred = truth + t
      bits[i] = Math.floor(r() * 32) & (emptyJump ? 0x0f : 0x1f);
    }
    return { truth, pred, bits };
  }

  const SCRIPT = `
W, H = ${W}, ${H}
th = ${JSON.stringify(THRESH)}
f, B, c, eps = ${CAM.focalPx}, ${CAM.baselineM}, ${CAM.cxShiftPx}, 1e-6
T = load('truth', '<f4').astype(np.float64)
bits = load('bits', 'u1')
out = {}
for case in ['pred', 'nopred']:
    P = load('pred', '<f4').astype(np.float64) if case == 'pred' else np.full(T.shape, np.nan)
    with np.errstate(invalid='ignore'):
        E = P - T
    valid = np.isfinite(E)
    A = np.abs(np.where(valid, E, 0.0))
    res = []
    for r in range(5):
        m = (bits & (1 << r)) != 0
        vm = m & valid
        px, nv = int(m.sum()), int(vm.sum())
        e, a = E[vm], A[vm]
        bad = [int((m & ~valid).sum() + (a > t).sum()) for t in th]
        d = {'pixels': px, 'valid': nv, 'sumAbs': float(a.sum()), 'sumSq': float((e * e).sum()), 'sumErr': float(e.sum()), 'bad': bad}
        d['coverage'] = 100.0 * nv / px if px else None
        d['epe'] = float(a.mean()) if nv else None
        d['rmse'] = float(np.sqrt((e * e).mean())) if nv else None
        d['bias'] = float(e.mean()) if nv else None
        d['rates'] = [100.0 * b / px if px else None for b in bad]
        d['q'] = [float(v) for v in np.quantile(a, [0.5, 0.68, 0.75, 0.95, 0.99])] if nv else None
        # depth rule (src/metrics/score.ts): truth d+c > eps, valid prediction; d_p+c <= 0 fails
        dm = vm & (T + c > eps)
        ok = dm & (P + c > 0)
        fail = dm & ~(P + c > 0)
        Zt = f * B / (T[ok] + c)
        Zp = f * B / (P[ok] + c)
        dz = Zp - Zt
        d['depthCount'] = int(ok.sum()); d['depthFail'] = int(fail.sum())
        d['depthSumRel'] = float((np.abs(dz) / Zt).sum()); d['depthSumSq'] = float((dz * dz).sum())
        d['depth_relerr'] = float((np.abs(dz) / Zt).mean()) if ok.any() else None
        d['depth_rmse_m'] = float(np.sqrt((dz * dz).mean())) if ok.any() else None
        res.append(d)
    out[case] = res
print(json.dumps(out))
`;

  for (const [seed, emptyJump] of [
    [11, false],
    [12, true],
  ] as const) {
    it(`counts exact, means to 1e-9 relative, quantiles equal (seed ${seed}${emptyJump ? ', empty jump region' : ''})`, () => {
      const { truth, pred, bits } = makeCase(seed, emptyJump);
      const ref = runNumpy({ truth, pred, bits }, SCRIPT);
      const regions: RegionMap = plainRegionMap(W, H, bits);
      const runs = {
        pred: scorePair(pred, truth, regions, { thresholds: THRESH, quantiles: QUANT, camera: CAM }),
        nopred: scorePair(null, truth, regions, { thresholds: THRESH, quantiles: QUANT, camera: CAM }),
      };
      const near = (a: number | null, b: number | null, what: string) => {
        if (b === null) return expect(a, what).toBeNull();
        expect(a, what).not.toBeNull();
        expect(closeRel(a!, b, 1e-9), `${what}: ${a} vs ${b}`).toBe(true);
      };
      let nonEmpty = 0;
      for (const kind of ['pred', 'nopred'] as const) {
        REGION_IDS.forEach((id, r) => {
          const d = ref[kind][r];
          const { sums, figures } = runs[kind][id];
          const w = `${kind}/${id}`;
          expect(sums.pixels, w).toBe(d.pixels);
          expect(sums.valid, w).toBe(d.valid);
          expect(sums.bad, w).toEqual(d.bad);
          expect(sums.depthCount, w).toBe(d.depthCount);
          expect(sums.depthFail, w).toBe(d.depthFail);
          near(sums.sumAbs, d.sumAbs, `${w} sumAbs`);
          near(sums.sumSq, d.sumSq, `${w} sumSq`);
          near(sums.sumErr, d.sumErr, `${w} sumErr`);
          near(sums.depthSumRel, d.depthSumRel, `${w} depthSumRel`);
          near(sums.depthSumSq, d.depthSumSq, `${w} depthSumSq`);
          near(figures.coverage, d.coverage, `${w} coverage`);
          near(figures.epe, d.epe, `${w} epe`);
          near(figures.rmse, d.rmse, `${w} rmse`);
          near(figures.bias, d.bias, `${w} bias`);
          figures.rates.forEach((v, j) => near(v, d.rates[j], `${w} rate ${THRESH[j]}`));
          const q = figures.quantiles;
          if (d.q === null) expect(q, w).toEqual(QUANT.map(() => null));
          // same order statistics and numpy's own lerp: 1e-12 relative
          else q.forEach((v, j) => expect(closeRel(v!, d.q[j], 1e-12), `${w} q${j}: ${v} vs ${d.q[j]}`).toBe(true));
          near(figures.depth_relerr, d.depth_relerr, `${w} depth_relerr`);
          near(figures.depth_rmse_m, d.depth_rmse_m, `${w} depth_rmse_m`);
          if (d.pixels > 0) nonEmpty++;
        });
      }
      // the data exercise the interesting cases
      expect(nonEmpty).toBe(emptyJump ? 8 : 10);
      const k = runs.pred.known.sums;
      expect(k.depthFail! > 0 && k.valid < k.pixels && k.bad[2] > 0).toBe(true);
    });
  }
});
