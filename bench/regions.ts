/**
 * How the defaults of the `flat` and `jump` regions were chosen: on rendered dock scenes
 * (not the demo list: seeds of their own), block matching (SAD, its defaults) is run and
 * each visible pixel is marked failed when its prediction is missing or off by more than
 * 1 px. A region is a good diagnostic when its pixels are where the matcher fails, so for
 * each candidate parameter set we measure Youden's J = (share of failed pixels inside the
 * region) - (share of succeeded pixels inside the region), and take the set with the
 * largest J. Flat is judged on visible pixels away from truth jumps (gap 1 px, radius 6),
 * jump on visible pixels outside the chosen flat region, so each region is measured on
 * the failures it is meant to explain.
 *
 *   npm run bench -- regions
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DEFAULT_REGION_PARAMS } from '../src/core/regions.js';
import { loadManifest, sortedPairs } from '../src/dataset/manifest.js';
import { loadPair } from '../src/dataset/load.js';
import { deriveOcclusion } from '../src/dataset/occlusion.js';
import { jumpMask, textureEnergy } from '../src/dataset/regions.js';
import { writeSyntheticDataset } from '../src/synth/dataset.js';
import { blockMatcher } from '../matchers/block/index.js';
import { withDefaults } from '../src/core/matcher.js';

const PAIRS = Number(process.env.PARALLAX_BENCH_REGION_PAIRS ?? 12);
const WINDOWS = [5, 7, 9, 11, 15];
const FLAT_T = [0.1, 0.25, 0.5, 0.75, 1, 1.5, 2, 3, 4, 5, 6, 8, 10, 12, 16, 20, 25, 32, 40];
const GAPS = [0.25, 0.5, 0.75, 1, 1.25, 1.5, 2, 3, 4, 6];
const RADII = [1, 2, 3, 4, 5, 6, 8];

interface Scene {
  w: number;
  h: number;
  gray: Float32Array;
  truth: Float32Array;
  visible: Uint8Array;
  failed: Uint8Array;
}

/** Youden's J of a mask over the pixels `use`: P(mask | failed) - P(mask | ok). */
function youden(scenes: readonly Scene[], mask: (s: Scene, k: number) => Uint8Array, use: (s: Scene, k: number) => Uint8Array): { j: number; share: number } {
  let fIn = 0;
  let fAll = 0;
  let oIn = 0;
  let oAll = 0;
  scenes.forEach((s, k) => {
    const m = mask(s, k);
    const u = use(s, k);
    for (let i = 0; i < m.length; i++) {
      if (!u[i]) continue;
      if (s.failed[i]) {
        fAll++;
        if (m[i]) fIn++;
      } else {
        oAll++;
        if (m[i]) oIn++;
      }
    }
  });
  return { j: fIn / Math.max(1, fAll) - oIn / Math.max(1, oAll), share: (fIn + oIn) / Math.max(1, fAll + oAll) };
}

export default async function (): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'parallax-bench-regions-'));
  const scenes: Scene[] = [];
  try {
    await writeSyntheticDataset(dir, { count: PAIRS, seed: 4049, width: 480, height: 360, name: 'region-scenes' });
    const m = loadManifest(dir);
    const block = blockMatcher;
    for (const entry of sortedPairs(m)) {
      const p = await loadPair(m, entry);
      const out = await block.match(
        { width: p.width, height: p.height, left: p.leftGray, right: p.rightGray, minDisparity: p.disparityRange[0], maxDisparity: p.disparityRange[1] },
        withDefaults(block.params, {}),
        new AbortController().signal,
      );
      const disp = out instanceof Float32Array ? out : out.disparity;
      const n = p.width * p.height;
      const occ = p.occlusion ?? deriveOcclusion(p.truth.data, p.width, p.height, DEFAULT_REGION_PARAMS.occlusionTol, DEFAULT_REGION_PARAMS.occlusionTau);
      const visible = new Uint8Array(n);
      const failed = new Uint8Array(n);
      for (let i = 0; i < n; i++) {
        const t = p.truth.data[i];
        if (!Number.isFinite(t) || occ[i]) continue;
        visible[i] = 1;
        const e = Math.abs(disp[i] - t);
        failed[i] = e <= 1 ? 0 : 1; // NaN (no answer) fails too
      }
      scenes.push({ w: p.width, h: p.height, gray: p.leftGray, truth: p.truth.data, visible, failed });
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }

  // Flat: visible pixels away from truth jumps.
  const awayFromJumps = scenes.map((s) => {
    const near = jumpMask(s.truth, s.w, s.h, 1, 6);
    return s.visible.map((v, i) => (v && !near[i] ? 1 : 0));
  });
  const energies = new Map<number, Float64Array[]>(WINDOWS.map((w) => [w, scenes.map((s) => textureEnergy(s.gray, s.w, s.h, w))]));
  const flatRows: string[] = [];
  let bestFlat = { w: 0, t: 0, j: -Infinity, share: 0 };
  for (const w of WINDOWS) {
    for (const t of FLAT_T) {
      const r = youden(scenes, (_, k) => energies.get(w)![k].map((e) => (e < t ? 1 : 0)) as unknown as Uint8Array, (_, k) => awayFromJumps[k]);
      flatRows.push(`| ${w} | ${t} | ${r.j.toFixed(3)} | ${(100 * r.share).toFixed(1)} |`);
      if (r.j > bestFlat.j) bestFlat = { w, t, j: r.j, share: r.share };
    }
  }
  // Jump: visible pixels outside the chosen flat region.
  const flatChosen = scenes.map((s, k) => energies.get(bestFlat.w)![k].map((e, i) => (s.visible[i] && !(e < bestFlat.t) ? 1 : 0)) as unknown as Uint8Array);
  const jumpRows: string[] = [];
  let bestJump = { gap: 0, r: 0, j: -Infinity, share: 0 };
  for (const gap of GAPS) {
    for (const radius of RADII) {
      const r = youden(scenes, (s) => jumpMask(s.truth, s.w, s.h, gap, radius), (_, k) => flatChosen[k]);
      jumpRows.push(`| ${gap} | ${radius} | ${r.j.toFixed(3)} | ${(100 * r.share).toFixed(1)} |`);
      if (r.j > bestJump.j) bestJump = { gap, r: radius, j: r.j, share: r.share };
    }
  }
  const failShare = scenes.reduce((a, s) => a + s.failed.reduce((x, v) => x + v, 0), 0) / scenes.reduce((a, s) => a + s.visible.reduce((x, v) => x + v, 0), 0);
  process.stdout.write(
    [
      `${scenes.length} rendered dock pairs (480x360, seed 4049), block SAD defaults; ${(100 * failShare).toFixed(1)} % of visible pixels fail (|e| > 1 px or no answer).`,
      `Best flat: window ${bestFlat.w}, threshold ${bestFlat.t} (J = ${bestFlat.j.toFixed(3)}, ${(100 * bestFlat.share).toFixed(1)} % of the pixels judged). Best jump: gap ${bestJump.gap} px, radius ${bestJump.r} px (J = ${bestJump.j.toFixed(3)}, ${(100 * bestJump.share).toFixed(1)} %).`,
      `Current defaults: flatWindow ${DEFAULT_REGION_PARAMS.flatWindow}, flatThreshold ${DEFAULT_REGION_PARAMS.flatThreshold}, jumpGap ${DEFAULT_REGION_PARAMS.jumpGap}, jumpRadius ${DEFAULT_REGION_PARAMS.jumpRadius}.`,
      '',
      '| flatWindow | flatThreshold | J | share % |',
      '|---:|---:|---:|---:|',
      ...flatRows,
      '',
      '| jumpGap | jumpRadius | J | share % |',
      '|---:|---:|---:|---:|',
      ...jumpRows,
      '',
    ].join('\n'),
  );
}
