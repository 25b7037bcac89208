/**
 * End to end through the CLI: `parallax run` imports predictions for a synthetic
 * dataset twice (a good and a degraded set), then `parallax compare` gates them and
 * `parallax report` re-renders a report.
 */
import { existsSync } from 'node:fs';
import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/app.js';
import { decodePfm, encodePfm } from '../../src/io/pfm.js';
import { createPrng } from '../../src/stats/prng.js';
import { buildSyntheticRun } from '../../bench/synthetic-run.js';

const tmp: string[] = [];
afterAll(async () => {
  for (const d of tmp) await rm(d, { recursive: true, force: true });
});

describe('run -> compare -> report through the CLI', () => {
  it('gates a degraded candidate (exit 1), passes a run against itself (exit 0), renders the report', async () => {
    const root = await mkdtemp(join(tmpdir(), 'plx-e2e-'));
    tmp.push(root);
    const { datasetDir } = await buildSyntheticRun({ root, pairs: 6, width: 96, height: 64, configs: [] });
    const rng = createPrng(4);
    for (const [name, bad] of [['good', 0], ['bad', 0.3]] as const) {
      await mkdir(join(root, name), { recursive: true });
      for (let k = 0; k < 6; k++) {
        const id = `p${String(k).padStart(3, '0')}`;
        const t = decodePfm(await readFile(join(datasetDir, `${id}-d.pfm`)), id);
        const d = new Float32Array(t.data.length);
        // good: |e| < 0.3 px; bad: 30 % of pixels off by 5 px (so above every threshold).
        for (let i = 0; i < d.length; i++) d[i] = (Number.isFinite(t.data[i]) ? t.data[i] : 10) + (rng.next() - 0.5) * 0.6 + (rng.next() < bad ? 5 : 0);
        await writeFile(join(root, name, `${id}.pfm`), encodePfm({ width: t.width, height: t.height, data: d }));
      }
    }
    const errs: string[] = [];
    const io = { stderr: (s: string) => void errs.push(s) };
    const base = join(root, 'runs', 'base');
    const cand = join(root, 'runs', 'cand');
    expect(await runCli(['run', '-d', datasetDir, '--predictions', join(root, 'good'), '--label', 'imported', '-o', base, '-q'], io), errs.join('')).toBe(0);
    expect(await runCli(['run', '-d', datasetDir, '--predictions', join(root, 'bad'), '--label', 'imported', '-o', cand, '-q'], io), errs.join('')).toBe(0);

    expect(await runCli(['compare', base, base, '--gate', 'visible/over2px:0.5', '--resamples', '200', '--out', join(root, 'self.md')], io)).toBe(0);
    expect(await runCli(['compare', base, cand, '--gate', 'visible/over2px:0.5', '--gate', 'known/coverage:1', '--resamples', '200'], io)).toBe(1);
    const md = await readFile(join(cand, 'compare.md'), 'utf8');
    expect(md).toMatch(/\| imported \| visible\/over2px \|.*\*\*FAIL\*\*/);
    expect(md).toMatch(/\| imported \| known\/coverage \|.*\| pass \|/);
    // An unknown metric is a usage error: exit 2.
    expect(await runCli(['compare', base, cand, '--gate', 'visible/sharpness:1'], io)).toBe(2);

    expect(await runCli(['report', base, '--resamples', '200'], io)).toBe(0);
    // Only the two perceptual disparity maps are offered (README, "Reading the report": perceptual maps, no rainbow); a usage error exits 2.
    expect(await runCli(['report', base, '--disparity-colors', 'jet'], io)).toBe(2);
    expect(errs.join('')).toContain('--disparity-colors: must be viridis or cividis');
    const html = await readFile(join(base, 'index.html'), 'utf8');
    expect(html).toContain('imported');
    expect(existsSync(join(base, 'summary.csv'))).toBe(true);
  });
});
