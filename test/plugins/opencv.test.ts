/**
 * The OpenCV example (matchers/examples/opencv_stereo.py) end to end through the
 * program plugin, wired in by the shipped experiment snippet
 * (matchers/examples/opencv.experiment.json): StereoBM per pair, StereoSGBM long-lived,
 * on a small random-dot pair generated here. Needs Debian's /usr/bin/python3 with
 * python3-opencv (installed by the project's test command).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { decodeNpy } from '../../src/io/npy.js';
import { encodePng } from '../../src/io/png.js';
import type { MatchInput, MatchOutput } from '../../src/core/matcher.js';
import { resolveMatcherEntries, type MatcherConfig } from '../../src/plugins/registry.js';
import { lcg32 } from '../support/rng.js';

const REPO = resolve(__dirname, '..', '..');
const EXAMPLES = join(REPO, 'matchers', 'examples');
const PY = '/usr/bin/python3';

// Scene (hand-built): background plane at d = 10, a foreground box x in [60, 110),
// y in [30, 90) at d = 22. Search range [4, 35] (32 levels, a multiple of 16).
const W = 160;
const H = 120;
const D_BG = 10;
const D_FG = 22;
const FG = { x0: 60, x1: 110, y0: 30, y1: 90 };
const MIN_D = 4;
const MAX_D = 35;

let tmp: string;
let left: Float32Array;
let right: Float32Array;
let truth: Float32Array;
let configs: MatcherConfig[];

/** Random 2x2-block dots (LCG, Numerical Recipes constants) over x in [-64, W). */
function dots(seed: number): (x: number, y: number) => number {
  const cols = (W + 64) >> 1;
  const rows = H >> 1;
  const v = new Uint8Array(cols * rows);
  const next = lcg32(seed); // LCG, Numerical Recipes constants
  for (let i = 0; i < v.length; i++) v[i] = next() >>> 24;
  return (x, y) => v[(y >> 1) * cols + ((x + 64) >> 1)];
}

function inFg(x: number, y: number): boolean {
  return x >= FG.x0 && x < FG.x1 && y >= FG.y0 && y < FG.y1;
}

beforeAll(() => {
  tmp = mkdtempSync(join(tmpdir(), 'parallax-plugins-opencv-'));
  const bg = dots(11);
  const fg = dots(23);
  left = new Float32Array(W * H);
  right = new Float32Array(W * H);
  truth = new Float32Array(W * H);
  for (let y = 0; y < H; y++) {
    for (let x = 0; x < W; x++) {
      // Left pixel x shows the surface point that lands at x_r = x - d in the right view.
      const f = inFg(x, y);
      truth[y * W + x] = f ? D_FG : D_BG;
      left[y * W + x] = f ? fg(x - D_FG, y) : bg(x - D_BG, y);
      // Right pixel x_r shows the foreground where a foreground left pixel lands on it.
      right[y * W + x] = inFg(x + D_FG, y) ? fg(x, y) : bg(x, y);
    }
  }
  const png = (g: Float32Array) => encodePng({ width: W, height: H, channels: 1, bitDepth: 8, data: Uint8Array.from(g) });
  writeFileSync(join(tmp, 'left.png'), png(left));
  writeFileSync(join(tmp, 'right.png'), png(right));
});

afterAll(async () => {
  for (const c of configs ?? []) await c.plugin.dispose?.();
  rmSync(tmp, { recursive: true, force: true });
});

function input(pairId: string, withSource: boolean): MatchInput {
  return {
    width: W,
    height: H,
    left,
    right,
    minDisparity: MIN_D,
    maxDisparity: MAX_D,
    ...(withSource ? { source: { pairId, left: join(tmp, 'left.png'), right: join(tmp, 'right.png') } } : {}),
  };
}

/**
 * Share of evaluated pixels within 1 px of the truth (invalid counts as a miss).
 * Evaluated: away from the image border and the left band without candidates
 * (x >= 44), away from the box edges (8 px) and from the occluded band left of the box.
 */
function withinOnePx(d: Float32Array): { share: number; n: number } {
  let n = 0;
  let good = 0;
  for (let y = 8; y < H - 8; y++) {
    for (let x = 44; x < W - 8; x++) {
      if (Math.abs(x - FG.x0) <= 8 + (D_FG - D_BG) || Math.abs(x - FG.x1) <= 8) continue;
      if (Math.abs(y - FG.y0) <= 8 || Math.abs(y - FG.y1) <= 8) continue;
      n++;
      const e = Math.abs(d[y * W + x] - truth[y * W + x]);
      if (e <= 1) good++;
    }
  }
  return { share: good / n, n };
}

/**
 * OpenCV run directly on the same files, both algorithms in one Python process:
 * raw fixed point -> /16, raw < min*16 -> NaN, saved as ref-bm.npy and ref-sgbm.npy.
 */
let refCache: Record<'bm' | 'sgbm', Float32Array> | undefined;
function opencvReference(algo: 'bm' | 'sgbm'): Float32Array {
  if (!refCache) {
    const code = `
import cv2, numpy as np, sys, os
d = sys.argv[1]
l = cv2.imread(os.path.join(d, 'left.png'), cv2.IMREAD_GRAYSCALE); r = cv2.imread(os.path.join(d, 'right.png'), cv2.IMREAD_GRAYSCALE)
mn, nd = ${MIN_D}, 32
bm = cv2.StereoBM_create(numDisparities=nd, blockSize=9); bm.setMinDisparity(mn)
bm.setUniquenessRatio(10); bm.setTextureThreshold(10); bm.setPreFilterCap(31)
bm.setSpeckleWindowSize(0); bm.setSpeckleRange(2); bm.setDisp12MaxDiff(1)
bs = 5
sg = cv2.StereoSGBM_create(minDisparity=mn, numDisparities=nd, blockSize=bs, P1=8*bs*bs, P2=32*bs*bs,
    disp12MaxDiff=1, preFilterCap=31, uniquenessRatio=10, speckleWindowSize=0, speckleRange=2,
    mode=cv2.STEREO_SGBM_MODE_HH)
for name, m in (('bm', bm), ('sgbm', sg)):
    raw = m.compute(l, r)
    out = raw.astype(np.float32) / 16.0
    out[raw < mn * 16] = np.nan
    np.save(os.path.join(d, 'ref-%s.npy' % name), out)
`;
    execFileSync(PY, ['-c', code, tmp], { stdio: ['ignore', 'ignore', 'pipe'] });
    const load = (n: string) => decodeNpy(readFileSync(join(tmp, n)), n).data;
    refCache = { bm: load('ref-bm.npy'), sgbm: load('ref-sgbm.npy') };
  }
  return refCache[algo];
}

async function run(c: MatcherConfig, inp: MatchInput): Promise<MatchOutput> {
  const r = await c.plugin.match(inp, c.params, new AbortController().signal);
  return r instanceof Float32Array ? { disparity: r } : r;
}

describe('OpenCV example through the program plugin', () => {
  it('resolves the shipped experiment snippet', async () => {
    const exp = JSON.parse(readFileSync(join(EXAMPLES, 'opencv.experiment.json'), 'utf8')) as { matchers: unknown[] };
    const programs = exp.matchers.filter((m) => typeof m !== 'string');
    configs = await resolveMatcherEntries(programs, { baseDir: EXAMPLES });
    expect(configs.map((c) => c.label)).toEqual(['ocv-bm', 'ocv-sgbm']);
  });

  it('StereoBM (per pair) recovers the scene and maps the invalid marker to NaN', async () => {
    const bm = configs[0];
    const out = await run(bm, input('rds-1', true));
    const { share, n } = withinOnePx(out.disparity);
    // Sanity bound, common practice: >= 90% within 1 px on textured, visible pixels.
    expect(n).toBeGreaterThan(3000);
    expect(share).toBeGreaterThanOrEqual(0.9);
    // OpenCV docs (from memory): no answer = (minDisparity - 1) * 16, i.e. 3.0 px here;
    // it must never appear as a number. Most of the left band x < 4 + 32 - 1 has no
    // full set of candidates, so StereoBM leaves it without an answer (NaN here).
    let nan = 0;
    let bandNan = 0;
    for (let y = 0; y < H; y++) {
      for (let x = 0; x < W; x++) {
        const v = out.disparity[y * W + x];
        if (Number.isNaN(v)) {
          nan++;
          if (x < MIN_D + 31) bandNan++;
        } else expect(v).toBeGreaterThanOrEqual(MIN_D);
      }
    }
    expect(bandNan).toBeGreaterThan(0.9 * (MIN_D + 31) * H);
    expect(nan).toBeGreaterThanOrEqual(bandNan);
    // OpenCV run directly on the same files: identical map (orientation, scaling, NaN).
    const ref = opencvReference('bm');
    for (let i = 0; i < W * H; i++) {
      const a = out.disparity[i];
      const b = ref[i];
      if (Number.isNaN(b)) expect(Number.isNaN(a), `pixel ${i}`).toBe(true);
      else expect(a, `pixel ${i}`).toBe(b);
    }
  });

  it('StereoSGBM (long-lived, 8 paths) recovers the scene, reports its own time, restarts nothing', async () => {
    const sgbm = configs[1];
    const a = await run(sgbm, input('rds-1', false));
    const pid = (sgbm.plugin as unknown as { serverPid(): number | undefined }).serverPid();
    const b = await run(sgbm, input('rds-2', false));
    // Same long-lived process for both pairs.
    expect((sgbm.plugin as unknown as { serverPid(): number | undefined }).serverPid()).toBe(pid);
    for (const out of [a, b]) {
      expect(out.selfTimeMs).toBeGreaterThan(0);
      const { share } = withinOnePx(out.disparity);
      expect(share).toBeGreaterThanOrEqual(0.9); // common practice, as above
      for (const v of out.disparity) if (!Number.isNaN(v)) expect(v).toBeGreaterThanOrEqual(MIN_D);
    }
    const ref = opencvReference('sgbm');
    for (let i = 0; i < W * H; i++) {
      const v = a.disparity[i];
      if (Number.isNaN(ref[i])) expect(Number.isNaN(v), `pixel ${i}`).toBe(true);
      else expect(v, `pixel ${i}`).toBe(ref[i]);
    }
  });
});
