/**
 * Sparsification figures (src/metrics/sparsify.ts) against an independent numpy
 * implementation of the definitions in the README ("Regions and metrics"), on random
 * data with holes and continuous confidences (ties impossible), per region, through
 * scorePair; plus two properties of the definition.
 */
import { describe, expect, it } from 'vitest';
import { REGION_BIT, REGION_IDS, plainRegionMap } from '../../src/core/regions.js';
import { scorePair } from '../../src/metrics/score.js';
import { sparsify } from '../../src/metrics/sparsify.js';
import { closeRel, rng, runNumpy } from './helpers.js';

const SCRIPT = `
W = json.loads(open(os.path.join(D, "meta.bin")).read())
truth = load("truth", np.float32).astype(np.float64)
pred = load("pred", np.float32).astype(np.float64)
conf = load("conf", np.float32).astype(np.float64)
bits = load("bits", np.uint8)
out = {}
for name, bit in W["regions"]:
    m = (bits & bit) != 0
    e = pred[m] - truth[m]
    c = conf[m]
    ok = np.isfinite(e)
    e = np.abs(e[ok]); c = c[ok]
    n = e.size
    if n == 0:
        out[name] = None
        continue
    order = np.argsort(-c, kind="stable")
    byconf = np.cumsum(e[order])
    byerr = np.cumsum(np.sort(e))
    kept = [-(-j * n // 20) for j in range(20, 0, -1)]      # ceil(j * n / 20)
    curve = [byconf[k - 1] / k for k in kept]
    oracle = [byerr[k - 1] / k for k in kept]
    bad = np.cumsum(e[order] > 1.0)
    ms = np.arange(1, n + 1)
    okm = ms[bad <= 0.01 * ms]
    clean = 100.0 * (okm.max() if okm.size else 0) / n
    out[name] = {"auc": float(np.mean(curve)), "oracle": float(np.mean(oracle)), "clean": float(clean),
                 "curve": [float(x) for x in curve], "oracle_curve": [float(x) for x in oracle]}
print(json.dumps(out))
`;

describe('sparsification', () => {
  it('equals numpy per region: curves, areas, gap and clean share (<= 1e-9 relative)', () => {
    const W = 48;
    const H = 40;
    const n = W * H;
    const r = rng(31);
    const truth = new Float32Array(n);
    const pred = new Float32Array(n);
    const conf = new Float32Array(n);
    const bits = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      truth[i] = 10 + 30 * r();
      // Errors mostly small, some large; a tenth of the pixels without an answer.
      const err = r() < 0.15 ? (r() - 0.5) * 12 : (r() - 0.5) * 1.2;
      pred[i] = r() < 0.1 ? NaN : truth[i] + err;
      // Confidence related to the error, plus noise: continuous, so no ties.
      conf[i] = -Math.abs(err) + 2 * r();
      let b = REGION_BIT.known;
      if (r() < 0.8) b |= REGION_BIT.visible;
      else b |= REGION_BIT.occluded;
      if (r() < 0.3) b |= REGION_BIT.flat;
      if (r() < 0.1) b |= REGION_BIT.jump;
      bits[i] = b;
    }
    const regions = REGION_IDS.map((id) => [id, REGION_BIT[id]]);
    const meta = new TextEncoder().encode(JSON.stringify({ regions }));
    const ref = runNumpy({ truth, pred, conf, bits, meta }, SCRIPT);
    const score = scorePair(pred, truth, plainRegionMap(W, H, bits), { thresholds: [1, 2], quantiles: [50] }, conf);
    let checked = 0;
    for (const id of REGION_IDS) {
      const f = score[id].figures;
      const want = ref[id];
      if (want === null) {
        expect(f.conf_auc, id).toBeUndefined();
        continue;
      }
      checked++;
      expect(closeRel(f.conf_auc!, want.auc, 1e-9), `${id} auc ${f.conf_auc} vs ${want.auc}`).toBe(true);
      expect(closeRel(f.conf_oracle_auc!, want.oracle, 1e-9), `${id} oracle`).toBe(true);
      expect(closeRel(f.conf_gap!, want.auc - want.oracle, 1e-9), `${id} gap`).toBe(true);
      expect(closeRel(f.conf_clean_share!, want.clean, 1e-9), `${id} clean ${f.conf_clean_share} vs ${want.clean}`).toBe(true);
      f.conf_curve!.forEach((v, k) => expect(closeRel(v, want.curve[k], 1e-9), `${id} curve[${k}]`).toBe(true));
      f.oracle_curve!.forEach((v, k) => expect(closeRel(v, want.oracle_curve[k], 1e-9), `${id} oracle[${k}]`).toBe(true));
      // A property of the definition: the smallest errors are never worse than any other choice.
      f.conf_curve!.forEach((v, k) => expect(f.oracle_curve![k]).toBeLessThanOrEqual(v + 1e-12));
    }
    expect(checked).toBeGreaterThanOrEqual(4);
    // Without a confidence map there are no sparsification figures.
    expect(scorePair(pred, truth, plainRegionMap(W, H, bits), { thresholds: [1], quantiles: [50] }).known.figures.conf_auc).toBeUndefined();
  });

  it('a confidence equal to -|error| ranks exactly like the oracle: conf_gap = 0', () => {
    const r = rng(5);
    const n = 500;
    const err = Float64Array.from({ length: n }, () => Math.abs(r() - 0.5) * 4);
    const conf = Float64Array.from(err, (e) => -e);
    const f = sparsify(err, conf, n)!;
    expect(f.conf_gap).toBe(0);
    expect(f.conf_curve).toEqual(f.oracle_curve);
  });

  it('worked example: 4 predictions, errors 0, 3, 0.5, 2 with confidences 0.9, 0.1, 0.8, 0.5', () => {
    // Confidence order: errors 0, 0.5, 2, 3. Share 100 %: 4 kept, epe 5.5 / 4 = 1.375;
    // 75 %: ceil(3) = 3 kept, 2.5 / 3; 50 %: 2 kept, 0.25; 25 %: 1 kept, 0; 5 %: ceil(0.2) = 1 kept, 0.
    // Clean share: the first two have no error above 1 px; the third (2 px) makes 1 of 3 (33 %) -> 50 %.
    const f = sparsify(Float64Array.from([0, 3, 0.5, 2]), Float64Array.from([0.9, 0.1, 0.8, 0.5]), 4)!;
    expect(f.conf_curve[0]).toBeCloseTo(1.375, 12);
    expect(f.conf_curve[5]).toBeCloseTo(2.5 / 3, 12); // share 75 %
    expect(f.conf_curve[10]).toBeCloseTo(0.25, 12); // share 50 %
    expect(f.conf_curve[19]).toBe(0); // share 5 %
    expect(f.conf_clean_share).toBe(50);
  });
});
