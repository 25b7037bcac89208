/**
 * Bench section "scoring": region building and per-pair scoring on a 2560x1440 pair,
 * against numpy computing the same definitions on the same files, and against a plain
 * typed-array copy of the data the scorer reads (the memory bound).
 *
 * Scene: a loading dock seen from a warehouse vehicle's stereo camera (floor plane whose
 * disparity grows towards the bottom, a back wall slanted in x, pallet boxes as steps,
 * a dock door as a recessed flat patch). Prediction = truth + noise, holes, outliers.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { buildRegions } from '../src/dataset/regions.js';
import { scorePair } from '../src/metrics/score.js';
import { DEFAULT_QUANTILES, DEFAULT_THRESHOLDS } from '../src/metrics/catalogue.js';
import { DEFAULT_REGION_PARAMS, REGION_IDS } from '../src/core/regions.js';
import { encodeNpy } from '../src/io/npy.js';
import { mulberry32 as rng } from '../src/core/prng.js';

export const W = 2560;
export const H = 1440;
const RUNS = 5;
const CAMERA = { focalPx: 1800, baselineM: 0.2, cxShiftPx: 0 };

export function scoringScene(): { truth: Float32Array; pred: Float32Array; gray: Float32Array } {
  const r = rng(2026);
  const n = W * H;
  const truth = new Float32Array(n);
  const pred = new Float32Array(n);
  const gray = new Float32Array(n);
  const horizon = 0.45 * H;
  for (let y = 0; y < H; y++) {
    for (let x = 0; x < W; x++) {
      const i = y * W + x;
      // back wall slanted in x above the horizon, floor below it
      let d = y < horizon ? 30 + 0.004 * x : 30 + 0.12 * (y - horizon) + 0.002 * x;
      let g = 90 + 40 * Math.sin(x * 0.21) * Math.cos(y * 0.17) + 25 * r();
      // dock door: recessed, untextured
      if (x > 300 && x < 900 && y > 150 && y < horizon) {
        d = 24;
        g = 60;
      }
      // pallet boxes: fronto-parallel steps nearer than the floor behind them
      for (let b = 0; b < 6; b++) {
        const bx = 1000 + b * 250;
        const by = 700 + (b % 3) * 120;
        if (x >= bx && x < bx + 200 && y >= by && y < by + 260) {
          d = 70 + b * 9;
          g = 140 + 30 * ((x >> 3) % 2) + 10 * r();
        }
      }
      truth[i] = d;
      gray[i] = g;
    }
  }
  // truth holes (unknown) in a few blocks
  for (let k = 0; k < 40; k++) {
    const x0 = Math.floor(r() * (W - 40));
    const y0 = Math.floor(r() * (H - 30));
    for (let y = y0; y < y0 + 30; y++) for (let x = x0; x < x0 + 40; x++) truth[y * W + x] = NaN;
  }
  for (let i = 0; i < n; i++) {
    const u = r();
    // roughly Gaussian noise (sum of uniforms), 4 % invalid, 2 % outliers
    const noise = (r() + r() + r() - 1.5) * 0.6;
    pred[i] = u < 0.04 ? NaN : u < 0.06 ? truth[i] + (r() - 0.5) * 40 : truth[i] + noise;
    if (Number.isNaN(truth[i]) && u >= 0.04) pred[i] = 30 + r();
  }
  return { truth, pred, gray };
}

/** Best wall time and best CPU time (ms) of `runs` calls after two warm-up calls. */
function best(runs: number, f: () => void): { wall: number; cpu: number } {
  f(); // warm-up
  f();
  let wall = Infinity;
  let cpu = Infinity;
  for (let k = 0; k < runs; k++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    f();
    wall = Math.min(wall, performance.now() - t0);
    const c = process.cpuUsage(c0);
    cpu = Math.min(cpu, (c.user + c.system) / 1000);
  }
  return { wall, cpu };
}

const PY = String.raw`
import sys, os, json, time
import numpy as np
d = sys.argv[1]
T = np.load(os.path.join(d, 'truth.npy')).astype(np.float64)
P32 = np.load(os.path.join(d, 'pred.npy'))
bits = np.fromfile(os.path.join(d, 'regions.bin'), dtype=np.uint8)
th = json.loads(sys.argv[2]); f, B, c, eps = json.loads(sys.argv[3])
runs = int(sys.argv[4])
T = T.ravel()

def score():
    P = P32.ravel().astype(np.float64)
    with np.errstate(invalid='ignore'):
        E = P - T
    valid = np.isfinite(E)
    A = np.abs(E)
    dok = valid & (T + c > eps)
    with np.errstate(invalid='ignore', divide='ignore'):
        pos = P + c > 0
        Zt = f * B / (T + c)
        Zp = f * B / (P + c)
    out = []
    for r in range(5):
        m = (bits & (1 << r)) != 0
        vm = m & valid
        px = int(m.sum()); nv = int(vm.sum())
        e = E[vm]; a = A[vm]
        inval = px - nv
        bad = [inval + int(np.count_nonzero(a > t)) for t in th]
        res = {'pixels': px, 'coverage': 100.0 * nv / px if px else None,
               'epe': float(a.mean()) if nv else None, 'rmse': float(np.sqrt(np.dot(e, e) / nv)) if nv else None,
               'bias': float(e.mean()) if nv else None, 'rates': [100.0 * b / px if px else None for b in bad],
               'q': [float(v) for v in np.quantile(a, [${DEFAULT_QUANTILES.map((q) => q / 100).join(', ')}])] if nv else None}
        ok = m & dok & pos
        if ok.any():
            zt = Zt[ok]; dz = Zp[ok] - zt
            res['depth_relerr'] = float((np.abs(dz) / zt).mean()); res['depth_rmse_m'] = float(np.sqrt(np.dot(dz, dz) / dz.size))
        else:
            res['depth_relerr'] = None; res['depth_rmse_m'] = None
        out.append(res)
    return out

res = score(); score()
bt = float('inf'); bc = float('inf')
for _ in range(runs):
    c0 = time.process_time(); t0 = time.perf_counter(); score()
    bt = min(bt, time.perf_counter() - t0); bc = min(bc, time.process_time() - c0)
print(json.dumps({'best_s': bt, 'best_cpu_s': bc, 'figures': res, 'numpy': np.__version__}))
`;

export default async function (): Promise<void> {
  const n = W * H;
  const mp = n / 1e6;
  const { truth, pred, gray } = scoringScene();
  const params = DEFAULT_REGION_PARAMS;
  const thresholds = DEFAULT_THRESHOLDS;
  const regions = buildRegions({ truth: truth, leftGray: gray, width: W, height: H }, params);

  const tRegions = best(RUNS, () => void buildRegions({ truth: truth, leftGray: gray, width: W, height: H }, params));
  const tScore = best(RUNS, () => void scorePair(pred, truth, regions, { thresholds, quantiles: DEFAULT_QUANTILES, camera: CAMERA }));
  const tBoth = best(RUNS, () => {
    const rg = buildRegions({ truth: truth, leftGray: gray, width: W, height: H }, params);
    scorePair(pred, truth, rg, { thresholds, quantiles: DEFAULT_QUANTILES, camera: CAMERA });
  });
  const ours = scorePair(pred, truth, regions, { thresholds, quantiles: DEFAULT_QUANTILES, camera: CAMERA });

  // Memory bound: copy the bytes the scorer reads (truth, prediction, region bytes).
  const cT = new Float32Array(n);
  const cP = new Float32Array(n);
  const cB = new Uint8Array(n);
  const tCopy = best(RUNS * 2, () => {
    cT.set(truth);
    cP.set(pred);
    cB.set(regions.bits);
  });
  const bytes = n * (4 + 4 + 1);

  const dir = mkdtempSync(join(tmpdir(), 'parallax-bench-scoring-'));
  let py: { best_s: number; best_cpu_s: number; figures: any[]; numpy: string };
  try {
    writeFileSync(join(dir, 'truth.npy'), encodeNpy({ width: W, height: H, data: truth }));
    writeFileSync(join(dir, 'pred.npy'), encodeNpy({ width: W, height: H, data: pred }));
    writeFileSync(join(dir, 'image.npy'), encodeNpy({ width: W, height: H, data: gray }));
    writeFileSync(join(dir, 'regions.bin'), regions.bits);
    writeFileSync(join(dir, 'score.py'), PY);
    const cam = [CAMERA.focalPx, CAMERA.baselineM, CAMERA.cxShiftPx, 1e-6];
    const out = execFileSync(
      'python3',
      [join(dir, 'score.py'), dir, JSON.stringify(thresholds), JSON.stringify(cam), String(RUNS)],
      { encoding: 'utf8', maxBuffer: 16 << 20 },
    );
    py = JSON.parse(out);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }

  // Agreement check (the bench compares like with like): largest relative difference.
  let maxRel = 0;
  REGION_IDS.forEach((id, r) => {
    const a = ours[id].figures;
    const b = py.figures[r];
    const pairs: [number | null, number | null][] = [
      [a.coverage, b.coverage], [a.epe, b.epe], [a.rmse, b.rmse], [a.bias, b.bias],
      [a.depth_relerr, b.depth_relerr], [a.depth_rmse_m, b.depth_rmse_m],
      ...a.rates.map((v, j): [number | null, number | null] => [v, b.rates[j]]),
      ...a.quantiles.map((v, j): [number | null, number | null] => [v, b.q ? b.q[j] : null]),
    ];
    for (const [x, y] of pairs) {
      if (x === null || y === null) {
        if (x !== y) maxRel = Infinity;
        continue;
      }
      if (x !== y) maxRel = Math.max(maxRel, Math.abs(x - y) / Math.max(Math.abs(x), Math.abs(y)));
    }
  });

  const np = { wall: py.best_s * 1000, cpu: py.best_cpu_s * 1000 };
  const row = (what: string, t: { wall: number; cpu: number }) =>
    `| ${what} | ${t.wall.toFixed(1)} | ${(mp / (t.wall / 1000)).toFixed(1)} | ${t.cpu.toFixed(1)} |`;
  const counts = REGION_IDS.map((id) => `${id} ${ours[id].figures.pixels}`).join(', ');
  const gbs = (bytes / (tCopy.wall / 1000)) / 1e9;
  const lines = [
    `${W}x${H} pair (${mp.toFixed(2)} MP), ${thresholds.length} thresholds, ${DEFAULT_QUANTILES.length} quantiles, depth figures on; ` +
      `best of ${RUNS} after warm-up. CPU ms = process CPU time (the machine is shared; wall time counts waits).`,
    `Region pixels: ${counts}. Load average at start: ${loadavg()[0].toFixed(1)} on ${cpus().length} cores.`,
    '',
    '| step | wall ms | MP/s (wall) | CPU ms |',
    '|---|---:|---:|---:|',
    row('buildRegions (derived occlusion, flat, jump)', tRegions),
    row('scorePair (5 regions, one pass + per-region statistics)', tScore),
    row('buildRegions + scorePair', tBoth),
    row(`numpy ${py.numpy} scoring, same definitions and region bytes`, np),
    row(`memory bound: copy truth+pred+regions (${gbs.toFixed(2)} GB/s)`, tCopy),
    '',
    `scorePair vs numpy: ${(np.wall / tScore.wall).toFixed(1)}x faster by wall time, ` +
      `${(np.cpu / tScore.cpu).toFixed(1)}x by CPU time (target >= 4x). ` +
      `buildRegions + scorePair vs numpy scoring alone: ${(np.wall / tBoth.wall).toFixed(1)}x (wall). ` +
      `scorePair / copy: ${(tScore.wall / tCopy.wall).toFixed(0)}x the memory-bound time.`,
    `Largest relative difference between our figures and numpy's: ${maxRel === 0 ? '0' : maxRel.toExponential(2)}.`,
    '',
  ];
  process.stdout.write(lines.join('\n') + '\n');
}
