/**
 * Synthetic renderer timings: one 640x480 dock pair with 3x3 supersampling, the random-dot
 * pair, and the whole default demo set written to a temp folder. Wall and CPU time of this
 * process (CPU excludes time spent waiting for a core on a shared machine).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DEMO_HEIGHT, DEMO_PAIRS, DEMO_WIDTH, dockScene, randomDotPair, renderPair, rigForScene, writeDemoDataset } from '../src/synth/index.js';

async function timed(fn: () => unknown): Promise<{ wall: number; cpu: number }> {
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  await fn();
  const c = process.cpuUsage(c0);
  return { wall: performance.now() - t0, cpu: (c.user + c.system) / 1000 };
}

async function best(n: number, fn: () => unknown): Promise<{ wall: number; cpu: number }> {
  let w = Infinity;
  let c = Infinity;
  for (let i = 0; i < n; i++) {
    const t = await timed(fn);
    w = Math.min(w, t.wall);
    c = Math.min(c, t.cpu);
  }
  return { wall: w, cpu: c };
}

export default async function (): Promise<void> {
  const rows: string[] = [];
  const ms = (v: number): string => v.toFixed(0);
  for (const variant of ['crates', 'posts'] as const) {
    const scene = dockScene(variant, 1);
    const rig = rigForScene(scene, { width: 640, height: 480 });
    renderPair(scene, rig, { samples: 3 }); // warm-up
    const t = await best(3, () => renderPair(scene, rig, { samples: 3 }));
    rows.push(`| ${variant} pair, 640x480, 3x3 samples (best of 3) | ${ms(t.wall)} | ${ms(t.cpu)} |`);
  }
  const dots = await best(3, () => randomDotPair({ width: 640, height: 480, seed: 1, noiseSigma: 1 }));
  rows.push(`| random-dot pair, 640x480 (best of 3) | ${ms(dots.wall)} | ${ms(dots.cpu)} |`);
  const dir = mkdtempSync(join(tmpdir(), 'parallax-bench-demo-'));
  try {
    const demo = await timed(() => writeDemoDataset(dir));
    rows.push(`| demo set, ${DEMO_PAIRS.length} pairs at ${DEMO_WIDTH}x${DEMO_HEIGHT}, rendered and written | ${ms(demo.wall)} | ${ms(demo.cpu)} |`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  process.stdout.write(['| synthetic rendering | wall ms | cpu ms |', '|---|---:|---:|', ...rows, ''].join('\n'));
}
