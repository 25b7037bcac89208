/**
 * Runner wiring: self-reported match times, per-pair thumbnails for the report, the
 * scores of broken pairs, SIGTERM's exit code.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { AbortedError } from '../../src/core/errors.js';
import { DEFAULT_REGION_PARAMS, REGION_IDS } from '../../src/core/regions.js';
import type { JobResult } from '../../src/core/score.js';
import { loadManifest } from '../../src/dataset/manifest.js';
import type { MatcherPlugin } from '../../src/core/matcher.js';
import { pairPreviewPaths, writePairPreview } from '../../src/report/preview.js';
import { selfTime } from '../../src/runner/execute.js';
import { executeRun, pairRegions } from '../../src/runner/run.js';
import { truthOnlyScores, unscoredPair } from '../../src/runner/broken-pair.js';
import { loadPair } from '../../src/dataset/load.js';
import { aggregate } from '../../src/stats/aggregate.js';
import { writeDataset, type WrittenDataset } from '../dataset/fixture.js';
import { planWith } from './plan-helpers.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-integrate-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));


const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

function truthOf(ds: WrittenDataset, id: string): Float32Array {
  return ds.pairs.find((p) => p.id === id)!.truth.slice();
}

describe('match time', () => {
  it('selfTime reads only a finite, non-negative selfTimeMs of a MatchOutput', () => {
    // MatchOutput contract (src/plugins/contract.ts): { disparity, selfTimeMs? }.
    expect(selfTime({ disparity: new Float32Array(1), selfTimeMs: 7.5 })).toBe(7.5);
    expect(selfTime({ disparity: new Float32Array(1), selfTimeMs: 0 })).toBe(0);
    expect(selfTime(new Float32Array(1))).toBeUndefined();
    expect(selfTime({ disparity: new Float32Array(1) })).toBeUndefined();
    expect(selfTime({ disparity: new Float32Array(1), selfTimeMs: -1 })).toBeUndefined();
    expect(selfTime({ disparity: new Float32Array(1), selfTimeMs: NaN })).toBeUndefined();
    expect(selfTime({ disparity: new Float32Array(1), selfTimeMs: '5' })).toBeUndefined();
  });

  it('time_ms is the self-reported time when there is one, wall_ms the wall time around match()', async () => {
    const ds = writeDataset(join(root, 'ds-time'), { ids: ['bay-1'] });
    // README, "Outputs": a program's `time_ms` reply (MatchOutput.selfTimeMs) is the match time.
    /** Sleeps 60 ms and returns the truth; with `reports`, also says its match took that many ms. */
    const sleeper = (id: string, reports?: number): MatcherPlugin => ({
      id,
      summary: 'sleeps 60 ms (test only)',
      version: '1',
      params: [],
      match: async (input) => {
        await sleep(60);
        const disparity = truthOf(ds, input.source!.pairId);
        return reports === undefined ? disparity : { disparity, selfTimeMs: reports };
      },
    });
    const reporting = sleeper('reporting', 5);
    const silent = sleeper('silent');
    const runDir = join(root, 'run-time');
    await executeRun(await planWith(ds, [reporting, silent], runDir, root));
    const results = readFileSync(join(runDir, 'results.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l) as JobResult);
    const rep = results.find((r) => r.matcher === 'reporting')!;
    expect(rep.time_ms).toBe(5);
    // setTimeout(60) waits at least ~60 ms (Node timers may fire up to 1 ms early).
    expect(rep.wall_ms).toBeGreaterThanOrEqual(59);
    const sil = results.find((r) => r.matcher === 'silent')!;
    expect(sil.wall_ms).toBeGreaterThanOrEqual(59);
    expect(sil.time_ms).toBe(sil.wall_ms); // no self-reported time: the wall time
    const info = JSON.parse(readFileSync(join(runDir, 'run.json'), 'utf8'));
    expect(info.notes.time_ms).toMatch(/reports itself/);
    expect(info.notes.wall_ms).toMatch(/wall time/);
  });
});

describe('pair thumbnails for the report', () => {
  const oracle = (ds: WrittenDataset, id = 'oracle'): MatcherPlugin => ({
    id,
    summary: 'returns the truth (test only)',
    version: '1',
    params: [],
    match: (input) => truthOf(ds, input.source!.pairId),
  });

  it('are written once per pair, equal to writePairPreview of the loaded pair, and kept when they exist', async () => {
    const ds = writeDataset(join(root, 'ds-thumbs'), { ids: ['bay-1', 'bay-2'] });
    const runDir = join(root, 'run-thumbs');
    const plan = await planWith(ds, [oracle(ds, 'a'), oracle(ds, 'b')], runDir, root);
    // bay-2 already has thumbnails (as after an interrupted run): they must not be rewritten.
    const kept = pairPreviewPaths(runDir, 'dock-test', 'bay-2');
    mkdirSync(join(kept.left, '..'), { recursive: true });
    writeFileSync(kept.left, 'sentinel-left');
    writeFileSync(kept.regions, 'sentinel-regions');
    // Read after the last job, before the report (which may store its own thumbnails in place of unreadable ones).
    let afterJobs: string[] = [];
    await executeRun(plan, { onJob: (_r, done, total) => void (done === total && (afterJobs = [readFileSync(kept.left, 'utf8'), readFileSync(kept.regions, 'utf8')])) });
    expect(afterJobs).toEqual(['sentinel-left', 'sentinel-regions']);
    // bay-1: the report module's own writer on the same loaded pair is the reference.
    const m = loadManifest(ds.dir);
    const pair = await loadPair(m, m.pairs.find((p) => p.id === 'bay-1')!);
    const refDir = join(root, 'ref-thumbs');
    await writePairPreview(refDir, pair.dataset, pair.id, pair.left, pairRegions(pair, plan));
    const got = pairPreviewPaths(runDir, 'dock-test', 'bay-1');
    const ref = pairPreviewPaths(refDir, 'dock-test', 'bay-1');
    expect(readFileSync(got.left).equals(readFileSync(ref.left))).toBe(true);
    expect(readFileSync(got.regions).equals(readFileSync(ref.regions))).toBe(true);
  });
});

describe('broken pairs', () => {
  it('with truth but no left image: regions from the truth, flat empty, all-invalid rates', () => {
    // Hand-made 4x1 truth: two finite values, one NaN (unknown), one finite.
    const truth = { width: 4, height: 1, data: new Float32Array([1, 1, NaN, 1]) };
    const s = truthOnlyScores(truth, undefined, {}, DEFAULT_REGION_PARAMS, { thresholds: [1, 2], quantiles: DEFAULT_QUANTILES }).scores;
    // known = finite truth = 3 pixels (README, "Regions and metrics"); failed job = every known pixel bad.
    expect(s.known.figures.pixels).toBe(3);
    expect(s.known.figures.coverage).toBe(0);
    expect(s.known.figures.rates).toEqual([100, 100]);
    expect(s.known.figures.epe).toBeNull();
    // flat needs the left image: empty without it (documented choice).
    expect(s.flat.figures.pixels).toBe(0);
    // With a left image of constant luminance every visible pixel is flat (zero gradient < threshold).
    const withLeft = truthOnlyScores(truth, new Float32Array(4).fill(100), {}, DEFAULT_REGION_PARAMS, { thresholds: [1, 2], quantiles: DEFAULT_QUANTILES }).scores;
    expect(withLeft.flat.figures.pixels).toBe(withLeft.visible.figures.pixels);
    expect(withLeft.flat.figures.pixels).toBeGreaterThan(0);
  });

  it('without truth: every region empty, and aggregate leaves the pair out of the means', () => {
    const th = [1, 2];
    const empty = unscoredPair({ thresholds: th, quantiles: DEFAULT_QUANTILES });
    for (const r of REGION_IDS) {
      expect(empty[r].figures.pixels).toBe(0);
      expect(empty[r].figures.coverage).toBeNull();
      expect(empty[r].figures.rates).toEqual([null, null]);
    }
    const base = { matcher: 'm', matcherId: 'm', params: {}, dataset: 'd', time_ms: null, peak_mb: null, thresholds: th, quantiles: [...DEFAULT_QUANTILES] };
    // A scored pair: 4 pixels of known, 2 valid with |e| = 1 and 3 (hand-made sums).
    const good = unscoredPair({ thresholds: th, quantiles: DEFAULT_QUANTILES });
    good.known = {
      sums: { pixels: 4, valid: 2, sumAbs: 4, sumSq: 10, sumErr: 4, bad: [3, 3], depthCount: 0, depthSumRel: 0, depthSumSq: 0, depthFail: 0 },
      figures: { ...good.known.figures },
    };
    const rows = aggregate(
      [
        { ...base, pair: 'a', status: 'ok', scores: good },
        { ...base, pair: 'b', status: 'failed', error: 'pair not loaded', scores: empty },
      ] as JobResult[],
      { thresholds: th, quantiles: DEFAULT_QUANTILES, ci: false },
    );
    const known = rows.find((r) => r.region === 'known' && r.tag === null)!;
    // README, "Regions and metrics": an empty region is left out of means over pairs; n_pairs says how many.
    expect(known.n_pairs).toBe(1);
    expect(known.n_jobs).toBe(2);
  });
});

describe('AbortedError exit codes', () => {
  it('130 by default (128 + SIGINT 2), 143 when given (128 + SIGTERM 15)', () => {
    // Shell convention for a process ended by a signal: 128 + the signal number (POSIX signal numbers from memory).
    expect(new AbortedError().exitCode).toBe(130);
    expect(new AbortedError('stopped', 143).exitCode).toBe(143);
  });
});

it('the run folder keeps no thumbnails for a broken pair', async () => {
  const ds = writeDataset(join(root, 'ds-broken'), { ids: ['bay-1', 'bay-2'] });
  writeFileSync(join(ds.dir, 'bay-1/left.png'), 'not a png');
  const runDir = join(root, 'run-broken');
  const errors: string[] = [];
  const ok: MatcherPlugin = { id: 'oracle', summary: 'truth', version: '1', params: [], match: (input) => truthOf(ds, input.source!.pairId) };
  const out = await executeRun(await planWith(ds, [ok], runDir, root), { onPairError: (_d, _p, msg) => errors.push(msg) });
  expect(errors).toHaveLength(1);
  expect(errors[0]).toContain(join(ds.dir, 'bay-1/left.png'));
  expect(out.brokenPairs.map((b) => b.pair)).toEqual(['bay-1']);
  expect(existsSync(pairPreviewPaths(runDir, 'dock-test', 'bay-1').left)).toBe(false);
  expect(existsSync(pairPreviewPaths(runDir, 'dock-test', 'bay-2').left)).toBe(true);
  expect(out.results.map((r) => `${r.pair}:${r.status}`).sort()).toEqual(['bay-1:failed', 'bay-2:ok']);
});
