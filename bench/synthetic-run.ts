/**
 * A synthetic run folder for report tests and the report benchmark: a procedurally drawn
 * loading dock (dock wall with a roller door, concrete floor, a wooden pallet crate in
 * front) seen by a warehouse vehicle's stereo camera, with exact truth disparity, and
 * several made-up configurations whose outputs are the truth plus seeded noise and holes.
 * Scores come from the real scorer and region builder; previews from writePreview.
 */
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { JobResult } from '../src/core/score.js';
import { DEFAULT_REGION_PARAMS } from '../src/core/regions.js';
import { toLuminance, type RasterImage } from '../src/core/image.js';
import { encodePfm } from '../src/io/pfm.js';
import { encodePng } from '../src/io/png.js';
import { buildRegions } from '../src/dataset/regions.js';
import { scorePair } from '../src/metrics/score.js';
import { writePairPreview, writePreview } from '../src/report/preview.js';
import { createPrng } from '../src/stats/prng.js';
import { RUN_RECORD_FORMAT, writeRunRecord, type RunRecord } from '../src/io/run-record.js';
import { DEFAULT_QUANTILES } from '../src/metrics/catalogue.js';

export interface SyntheticConfig {
  label: string;
  noise: number;
  holes: number;
  timeMs: number;
  /** Fail on every k-th pair (1-based index divisible by k). */
  failEvery?: number;
  error?: string;
  /** Give a confidence map: minus the error's magnitude plus this much uniform noise. */
  confidenceNoise?: number;
}

export interface SyntheticRunOptions {
  root: string;
  pairs: number;
  width: number;
  height: number;
  configs: SyntheticConfig[];
  thresholds?: number[];
  /** Pair ids written to results (default p000...); the manifest always uses safe ids. */
  resultPairIds?: string[];
  runName?: string;
  seed?: number;
  /** Tag every second pair (k even) `wet-floor`, in the manifest and the results. */
  tagEven?: boolean;
  /** Write the per-pair thumbnails as the runner does (default true). */
  pairPreviews?: boolean;
}

function drawPair(w: number, h: number, k: number): { left: RasterImage; truth: Float32Array } {
  const rng = createPrng(1000 + k);
  const left = new Uint8Array(w * h * 3);
  const truth = new Float32Array(w * h);
  const horizon = Math.round(h * (0.45 + 0.05 * Math.sin(k)));
  const bx0 = Math.round(w * (0.25 + 0.2 * rng.next()));
  const bw = Math.round(w * 0.3);
  const by0 = Math.round(h * 0.5);
  const bh = Math.round(h * 0.35);
  const dWall = 8 + 4 * rng.next();
  const dBox = dWall + 10 + 6 * rng.next();
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const i = y * w + x;
      let d: number;
      let r: number;
      let g: number;
      let b: number;
      const n = rng.next() * 30 - 15;
      if (x >= bx0 && x < bx0 + bw && y >= by0 && y < by0 + bh) {
        d = dBox;
        const plank = Math.floor((y - by0) / Math.max(2, bh / 6)) % 2;
        r = 150 + 25 * plank + n;
        g = 105 + 20 * plank + n;
        b = 60 + n;
      } else if (y < horizon) {
        d = dWall;
        const door = x > w * 0.1 && x < w * 0.9 && y > h * 0.08;
        const slat = door && Math.floor(y / 4) % 2 === 0;
        r = (door ? 120 : 95) + (slat ? 20 : 0) + n;
        g = (door ? 130 : 100) + (slat ? 20 : 0) + n;
        b = (door ? 145 : 110) + (slat ? 20 : 0) + n;
      } else {
        d = dWall + ((y - horizon) / (h - horizon)) * (dBox + 12 - dWall);
        const v = 140 + n + 10 * Math.sin(x * 0.3);
        r = v;
        g = v;
        b = v - 5;
      }
      if (y < 3) d = NaN; // a strip without truth
      truth[i] = d;
      left[i * 3] = Math.max(0, Math.min(255, Math.round(r)));
      left[i * 3 + 1] = Math.max(0, Math.min(255, Math.round(g)));
      left[i * 3 + 2] = Math.max(0, Math.min(255, Math.round(b)));
    }
  }
  return { left: { width: w, height: h, channels: 3, bitDepth: 8, data: left }, truth };
}

export async function buildSyntheticRun(o: SyntheticRunOptions): Promise<{ runDir: string; datasetDir: string; results: JobResult[] }> {
  const thresholds = o.thresholds ?? [0.5, 1, 2, 3];
  const datasetDir = join(o.root, 'dock-yard');
  const runDir = join(o.root, 'run');
  await mkdir(datasetDir, { recursive: true });
  await mkdir(runDir, { recursive: true });
  const ids = Array.from({ length: o.pairs }, (_, k) => `p${String(k).padStart(3, '0')}`);
  const resultIds = o.resultPairIds ?? ids;
  const results: JobResult[] = [];
  const rng = createPrng(o.seed ?? 77);
  const gauss = (): number => Math.sqrt(-2 * Math.log(1 - rng.next())) * Math.cos(2 * Math.PI * rng.next());
  for (let k = 0; k < o.pairs; k++) {
    const { left, truth } = drawPair(o.width, o.height, k);
    const png = encodePng(left);
    await writeFile(join(datasetDir, `${ids[k]}-l.png`), png);
    await writeFile(join(datasetDir, `${ids[k]}-r.png`), png);
    await writeFile(join(datasetDir, `${ids[k]}-d.pfm`), encodePfm({ width: o.width, height: o.height, data: truth }));
    const regions = buildRegions({ truth: truth, leftGray: toLuminance(left), width: o.width, height: o.height }, DEFAULT_REGION_PARAMS);
    if (o.pairPreviews !== false) await writePairPreview(runDir, 'dock-yard', resultIds[k], left, regions);
    for (const c of o.configs) {
      const failed = c.failEvery !== undefined && (k + 1) % c.failEvery === 0;
      let pred: Float32Array | null = null;
      let conf: Float32Array | null = null;
      if (!failed) {
        pred = new Float32Array(truth.length);
        if (c.confidenceNoise !== undefined) conf = new Float32Array(truth.length);
        for (let i = 0; i < pred.length; i++) {
          const t = Number.isFinite(truth[i]) ? truth[i] : 10;
          const e = c.noise * gauss();
          pred[i] = rng.next() < c.holes ? NaN : t + e;
          if (conf) conf[i] = -Math.abs(e) + (c.confidenceNoise ?? 0) * rng.next();
        }
      }
      const scores = scorePair(pred, truth, regions, { thresholds, quantiles: [...DEFAULT_QUANTILES] }, conf);
      const job: JobResult = {
        matcher: c.label,
        matcherId: c.label.split(':')[0],
        params: {},
        dataset: 'dock-yard',
        pair: resultIds[k],
        status: failed ? 'failed' : 'ok',
        time_ms: failed ? null : c.timeMs * (0.9 + 0.2 * rng.next()),
        peak_mb: 50 + 10 * rng.next(),
        scores,
        thresholds,
        quantiles: [...DEFAULT_QUANTILES],
      };
      if (failed) job.error = c.error ?? 'matcher exited with code 3';
      if (o.tagEven && k % 2 === 0) job.tags = ['wet-floor'];
      results.push(job);
      if (pred) await writePreview(runDir, c.label, 'dock-yard', resultIds[k], { width: o.width, height: o.height, data: pred });
    }
  }
  const manifest = {
    name: 'dock-yard',
    description: 'Synthetic loading dock seen from a warehouse vehicle (test data)',
    camera: { focalPx: 500, baselineM: 0.12, cxShiftPx: 0 },
    disparityRange: [0, 48],
    pairs: ids.map((id, k) => ({ id, left: `${id}-l.png`, right: `${id}-r.png`, truth: `${id}-d.pfm`, ...(o.tagEven && k % 2 === 0 ? { tags: ['wet-floor'] } : {}) })),
  };
  await writeFile(join(datasetDir, 'dataset.json'), JSON.stringify(manifest, null, 2));
  const info: RunRecord = {
    format: RUN_RECORD_FORMAT,
    tool: { name: 'parallax', version: '0.1.0', git: { commit: '0123456789abcdef0123456789abcdef01234567', dirty: false } },
    name: o.runName ?? 'dock-synthetic',
    status: 'complete',
    started: '2026-01-05T08:00:00.000Z',
    ended: '2026-01-05T08:02:00.000Z',
    config: {
      thresholds,
      quantiles: [...DEFAULT_QUANTILES],
      regions: { ...DEFAULT_REGION_PARAMS },
      matchers: o.configs.map((c) => ({ label: c.label, matcherId: c.label.split(':')[0], kind: 'matcher' as const, version: '1', params: { noise: c.noise }, codeHash: 'f'.repeat(64) })),
      datasets: [{ name: 'dock-yard', path: datasetDir, manifest: join(datasetDir, 'dataset.json'), hash: 'c'.repeat(64), pairs: o.pairs }],
    },
    jobs: { total: results.length, ok: results.filter((r) => r.status === 'ok').length, failed: results.filter((r) => r.status === 'failed').length },
    environment: { node: process.version, cpu: { model: 'synthetic', count: 2 }, os: { platform: 'linux', release: '', arch: 'x64' }, memoryMb: 1024 },
    notes: {},
  };
  // Through the runner's own writer, so a change of the record's format reaches these fixtures.
  await writeRunRecord(runDir, info);
  await writeFile(join(runDir, 'results.jsonl'), results.map((r) => JSON.stringify(r)).join('\n') + '\n');
  return { runDir, datasetDir, results };
}
