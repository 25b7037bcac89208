import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runCompare } from '../../src/cli/commands/compare.js';
import { ParallaxError } from '../../src/core/errors.js';
import { compareRuns } from '../../src/stats/compare.js';
import { evaluateGates, parseGate } from '../../src/stats/gates.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';
import { createPrng } from '../../src/stats/prng.js';
import { makeJob } from './fixtures.js';
import { DEFAULT_REGION_PARAMS } from '../../src/core/regions.js';
import { writeRunFolder } from './run-fixture.js';

const T = [1, 2];
const tmp: string[] = [];
afterAll(async () => {
  for (const d of tmp) await rm(d, { recursive: true, force: true });
});

/** Signed errors of 12 pairs x 40 pixels; `degrade` adds 3 px to every 4th visible pixel. */
function jobs(matcher: string, degrade: boolean, failPair?: string) {
  const rng = createPrng(31);
  const out = [];
  for (let p = 0; p < 12; p++) {
    const vis = Array.from({ length: 30 }, (_, i) => (rng.next() - 0.5) * 1.6 + (degrade && i % 4 === 0 ? 3 : 0));
    const occ = Array.from({ length: 10 }, () => (rng.next() - 0.5) * 8);
    const id = `p${String(p).padStart(2, '0')}`;
    const failed = id === failPair;
    const errs = (xs: number[]) => (failed ? xs.map(() => NaN) : xs);
    out.push(makeJob({ matcher, pair: id, failed, time_ms: 50 + p, errors: { all: errs([...vis, ...occ]), visible: errs(vis), occluded: errs(occ), flat: errs(vis.slice(0, 10)), jump: errs(vis.slice(10, 15)) } }, T));
  }
  return out;
}

const io = () => {
  const o = { out: '', err: '' };
  return { o, io: { stdout: (s: string) => void (o.out += s), stderr: (s: string) => void (o.err += s) } };
};

async function folders() {
  const root = await mkdtemp(join(tmpdir(), 'plx-cmp-'));
  tmp.push(root);
  const base = await writeRunFolder(join(root, 'base'), { name: 'base', thresholds: T, results: [...jobs('block', false), ...jobs('sgm', false)] });
  const same = await writeRunFolder(join(root, 'same'), { name: 'same', thresholds: T, results: [...jobs('block', false), ...jobs('sgm', false)] });
  const worse = await writeRunFolder(join(root, 'worse'), { name: 'worse', thresholds: T, results: [...jobs('block', true), ...jobs('sgm', false), ...jobs('census', false)] });
  const otherT = await writeRunFolder(join(root, 'otherT'), { name: 'otherT', thresholds: [1, 3], results: jobs('block', false).map((j) => ({ ...j, thresholds: [1, 3] })) });
  const failing = await writeRunFolder(join(root, 'failing'), { name: 'failing', thresholds: T, results: [...jobs('block', false, 'p03'), ...jobs('sgm', false)] });
  return { root, base, same, worse, otherT, failing };
}

describe('parallax compare', () => {
  it('a run against itself passes every gate, changes are 0 and p = 1 (exit 0)', async () => {
    const f = await folders();
    const { o, io: w } = io();
    const code = await runCompare({ baseline: f.base, candidate: f.same, gate: ['visible/over2px:0', 'known/coverage:0', 'known/epe:0', 'known/bias:0'], strict: true, resamples: 200 }, w);
    expect(code).toBe(0);
    expect(o.out).toMatch(/all 8 gate checks passed/);
    const md = await readFile(join(f.same, 'compare.md'), 'utf8');
    expect(md).toMatch(/all 8 gate checks pass/);
  });

  it('a degraded candidate fails the visible/over2px gate but not known/coverage (exit 1)', async () => {
    const f = await folders();
    const { o, io: w } = io();
    const code = await runCompare({ baseline: f.base, candidate: f.worse, gate: ['visible/over2px:0.5', 'known/coverage:1'], resamples: 200 }, w);
    expect(code).toBe(1);
    const fails = o.out.split('\n').filter((l) => l.includes('FAIL'));
    // Only `block` was degraded; every 4th of 30 visible pixels gets +3 px, pushing most of
    // them above 2 px: a worsening of roughly 20-27 points on visible/over2px.
    expect(fails.length).toBe(1);
    expect(fails[0]).toMatch(/block\s+visible\/over2px:0.5/);
    // census exists only in the candidate and is reported as such.
    expect(o.out).toMatch(/only in candidate: census/);
    const md = await readFile(join(f.worse, 'compare.md'), 'utf8');
    expect(md).toMatch(/\*\*FAIL\*\*/);
    expect(md).toMatch(/only in the candidate: census/);
  });

  it('the worsening of the degraded rows equals a hand computation on the same data', async () => {
    const f = await folders();
    const base = jobs('block', false);
    const worse = jobs('block', true);
    const c = compareRuns(
      { dir: f.base, info: { config: { thresholds: T, quantiles: [...DEFAULT_QUANTILES], regions: {}, datasets: [] } }, results: base },
      { dir: f.worse, info: { config: { thresholds: T, quantiles: [...DEFAULT_QUANTILES], regions: {}, datasets: [] } }, results: worse },
      { bootstrap: { resamples: 200 } },
    );
    const d = c.configs[0].deltas.find((x) => x.region === 'visible' && x.metric === 'over2px')!;
    // By hand: per pair, rate = 100 * #(|e| > 2) / 30; mean over pairs of (worse - base).
    const rate = (j: (typeof base)[number]) => j.scores.visible.figures.rates[1]!;
    const hand = worse.reduce((s, j, i) => s + rate(j) - rate(base[i]!), 0) / 12;
    expect(d.change).toBeCloseTo(hand, 10);
    expect(d.worsening).toBeCloseTo(hand, 10);
    expect(d.n).toBe(12);
    // All 12 pair differences are positive: exact sign-flip p = 2/4096 (identity and its mirror).
    expect(d.p).toBeCloseTo(2 / 4096, 15);
    expect(d.changeCi!.lo).toBeGreaterThan(0);
    // coverage is higher-better: the sign of the worsening is flipped.
    const cov = c.configs[0].deltas.find((x) => x.region === 'known' && x.metric === 'coverage')!;
    expect(cov.worsening).toBe(0);
  });

  it('a failed job counts as all-invalid, so failing on a pair worsens coverage and rates', async () => {
    const f = await folders();
    const { o, io: w } = io();
    const code = await runCompare({ baseline: f.base, candidate: f.failing, gate: ['known/coverage:5'], resamples: 200 }, w);
    // Losing one of 12 pairs entirely drops mean coverage by 100/12 = 8.3 points > 5.
    expect(code).toBe(1);
    expect(o.out).toMatch(/status changed: dock\/p03 ok -> failed/);
  });

  it('refuses runs with different thresholds (exit 2) unless --allow-mismatch', async () => {
    const f = await folders();
    const err = await runCompare({ baseline: f.base, candidate: f.otherT, resamples: 200 }, io().io).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ParallaxError);
    expect((err as ParallaxError).exitCode).toBe(2);
    expect((err as Error).message).toMatch(/thresholds differ/);
  });

  it('refuses a different dataset hash and a changed region parameter (exit 2)', async () => {
    const root = await mkdtemp(join(tmpdir(), 'plx-cmp2-'));
    tmp.push(root);
    const a = await writeRunFolder(join(root, 'a'), { name: 'a', thresholds: T, results: jobs('block', false) });
    const b = await writeRunFolder(join(root, 'b'), { name: 'b', thresholds: T, results: jobs('block', false), datasets: [{ name: 'dock', hash: 'b'.repeat(64) }], regions: { ...DEFAULT_REGION_PARAMS, flatWindow: 9 } });
    const err = (await runCompare({ baseline: a, candidate: b, resamples: 200 }, io().io).catch((e: unknown) => e)) as ParallaxError;
    expect(err.exitCode).toBe(2);
    expect(err.message).toMatch(/dataset dock differs/);
    expect(err.message).toMatch(/region parameter flatWindow differs/);
    const ok = await runCompare({ baseline: a, candidate: b, allowMismatch: true, resamples: 200 }, io().io);
    expect(ok).toBe(0);
  });

  it('a gate naming an unknown region or metric is a usage error (exit 2)', async () => {
    const f = await folders();
    for (const g of ['nowhere/epe:1', 'visible/over9px:1', 'visible/epe', 'visible/epe:-1']) {
      const err = (await runCompare({ baseline: f.base, candidate: f.same, gate: [g], resamples: 200 }, io().io).catch((e: unknown) => e)) as ParallaxError;
      expect(err.exitCode, g).toBe(2);
      expect(err.message.startsWith('--gate')).toBe(true);
    }
    const gf = join(f.root, 'gates.json');
    await writeFile(gf, JSON.stringify({ gates: ['visible/over2px:0.5', { region: 'known', metric: 'coverage', allowance: 1 }] }));
    const { io: w } = io();
    expect(await runCompare({ baseline: f.base, candidate: f.worse, gateFile: gf, resamples: 200 }, w)).toBe(1);
  });

  it('strict mode needs the whole interval within the allowance (non-inferiority)', () => {
    // Hand-built: 6 pairs, epe differences +0.2 +0.1 -0.05 +0.3 0 +0.15 -> mean 0.1167.
    const d = [0.2, 0.1, -0.05, 0.3, 0, 0.15];
    const base = d.map((_, i) => makeJob({ pair: `q${i}`, errors: { all: [1, -1] } }, T));
    const cand = d.map((x, i) => makeJob({ pair: `q${i}`, errors: { all: [1 + x, -1 - x] } }, T));
    const info = { config: { thresholds: T, quantiles: [...DEFAULT_QUANTILES], regions: {}, datasets: [] } };
    const c = compareRuns({ dir: 'a', info, results: base }, { dir: 'b', info, results: cand }, { bootstrap: { resamples: 1000 } });
    const gate = parseGate('known/epe:0.15', { thresholds: T, quantiles: DEFAULT_QUANTILES });
    const loose = evaluateGates(c, [gate], false)[0];
    const strict = evaluateGates(c, [gate], true)[0];
    expect(loose.worsening).toBeCloseTo(0.7 / 6, 12);
    // Mean 0.117 <= 0.15 passes; the upper interval bound lies above 0.15 (the largest
    // difference is 0.3), so non-inferiority at 0.15 is not shown.
    expect(loose.pass).toBe(true);
    expect(strict.upper!).toBeGreaterThan(0.15);
    expect(strict.pass).toBe(false);
  });
});
