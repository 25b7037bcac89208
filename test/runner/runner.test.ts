import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { DEFAULT_REGION_PARAMS } from '../../src/core/regions.js';
import type { JobResult } from '../../src/core/score.js';
import { DEFAULT_THRESHOLDS } from '../../src/metrics/types.js';
import type { MatcherPlugin } from '../../src/core/matcher.js';
import { csvText } from '../../src/report/csv.js';
import { pairsCsvHeader } from '../../src/report/pairs-csv.js';
import { checkOutput, validateOutput, oneLineError } from '../../src/runner/execute.js';
import { enumerateJobs, groupByPair, jobKeyString } from '../../src/runner/jobs.js';
import { parseJournal } from '../../src/runner/journal.js';
import { startPeakSampler } from '../../src/runner/memory.js';
import { planRun } from '../../src/runner/plan.js';
import { executeRun } from '../../src/runner/run.js';
import { encodePfm } from '../../src/io/pfm.js';
import { encodeNpy } from '../../src/io/npy.js';
import { encodePngDisparity } from '../../src/io/png.js';
import { writeDataset, type WrittenDataset } from '../dataset/fixture.js';
import { planWith } from './plan-helpers.js';
import { readCsv } from '../support/cli.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-runner-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

describe('csvText', () => {
  it('neutralises formula-like text cells and leaves numbers alone (OWASP CSV Injection guidance)', () => {
    const text = csvText(['a', 'b'], [
      ['=SUM(A1:A2)', -0.5],
      ['+1', '-x'],
      ['@cmd', '\tx'],
      ['\rx', 'plain'],
      [null, 3],
    ]);
    // Expected by hand: quote prefix on = + - @ TAB CR starts; RFC 4180 quotes a field
    // containing CR; -0.5 is a number and stays -0.5; null is an empty cell.
    expect(text).toBe(["a,b", "'=SUM(A1:A2),-0.5", "'+1,'-x", "'@cmd,'\tx", `"'\rx",plain`, ',3', ''].join('\n'));
  });

  it('quotes commas and quotes per RFC 4180', () => {
    expect(csvText(['x'], [['a,b'], ['say "hi"']])).toBe('x\n"a,b"\n"say ""hi"""\n');
  });
});

describe('pairs.csv header', () => {
  it('has exactly the agreed column order', () => {
    // Column order as the README's pairs.csv section states it, with the default thresholds and quantile levels.
    expect(pairsCsvHeader({ thresholds: DEFAULT_THRESHOLDS, quantiles: DEFAULT_QUANTILES }).join(',')).toBe(
      'matcher,condition,dataset,pair,region,band,status,pixels,coverage,epe,rmse,bias,over0.25px,over0.5px,over1px,over2px,over3px,q50,q68,q95,depth_relerr,depth_rmse_m,depth_relmed,depth_over1pct,depth_over2pct,depth_over5pct,conf_auc,conf_oracle_auc,conf_gap,conf_clean_share,subpix_lock,flicker,time_ms,peak_mb',
    );
  });
});

describe('job enumeration', () => {
  it('is sorted by dataset, pair, label whatever the input order, and grouped per pair', () => {
    const keys = enumerateJobs(
      [
        { name: 'ramp', pairIds: ['b', 'a'] },
        { name: 'dock', pairIds: ['z'] },
      ],
      ['sgm', 'block'],
    );
    // Expected order worked out by hand (code-unit order).
    expect(keys.map(jobKeyString)).toEqual(['dock/z/block', 'dock/z/sgm', 'ramp/a/block', 'ramp/a/sgm', 'ramp/b/block', 'ramp/b/sgm']);
    expect(groupByPair(keys).map((g) => g.length)).toEqual([2, 2, 2]);
  });
});

describe('journal', () => {
  it('skips a torn last line and refuses a malformed middle line', () => {
    const good = JSON.stringify({ matcher: 'a' });
    expect(parseJournal(`${good}\n${good}\n{"matcher":`, 'r.jsonl')).toHaveLength(2);
    expect(() => parseJournal(`${good}\n{oops\n${good}\n`, 'r.jsonl')).toThrow(InputError);
    expect(() => parseJournal(`${good}\n{oops\n${good}\n`, 'r.jsonl')).toThrow(/r\.jsonl: line 2/);
  });
});

describe('output validation', () => {
  it('accepts a Float32Array of width*height (bare or in { disparity }) and refuses the rest', () => {
    const a = new Float32Array(6);
    expect(validateOutput(a, 3, 2)).toBe(a);
    expect(validateOutput({ disparity: a }, 3, 2)).toBe(a);
    expect(() => validateOutput(new Float32Array(5), 3, 2)).toThrow(/5 values, expected 3x2 = 6/);
    expect(() => validateOutput(new Float64Array(6), 3, 2)).toThrow(/Float64Array/);
    expect(() => validateOutput(undefined, 3, 2)).toThrow(/expected a Float32Array/);
    // A confidence map must match the disparity's size (the contract, src/core/matcher.ts).
    const c = new Float32Array(6);
    expect(checkOutput({ disparity: a, confidence: c }, 3, 2)).toEqual({ disparity: a, confidence: c });
    expect(checkOutput(a, 3, 2).confidence).toBeNull();
    expect(() => checkOutput({ disparity: a, confidence: new Float32Array(5) }, 3, 2)).toThrow(/confidence that is not a Float32Array of 3x2/);
    expect(() => checkOutput({ disparity: a, confidence: [1, 2, 3, 4, 5, 6] }, 3, 2)).toThrow(/confidence/);
  });
  it('error texts become one line', () => {
    expect(oneLineError(new Error('first\n  at x (y.js:1)\nmore'))).toBe('first | at x (y.js:1) | more');
  });
});

describe('peak memory sampler', () => {
  it('sees a 64 MiB buffer allocated during an asynchronous job', async () => {
    const s = startPeakSampler(2);
    const before = process.memoryUsage.rss() / 2 ** 20;
    const big = new Float64Array((64 * 2 ** 20) / 8).fill(1); // touched: resident
    await new Promise((r) => setTimeout(r, 30));
    const peak = s.stop();
    expect(big[5]).toBe(1);
    // The allocation's own size is the reference: peak RSS must include most of it.
    expect(peak).toBeGreaterThan(before + 48);
  });
});

// ---------------------------------------------------------------- whole runs with test plugins

function oracle(ds: WrittenDataset): MatcherPlugin {
  return {
    id: 'oracle',
    summary: 'returns the truth (test only)',
    version: '1',
    params: [],
    match: (input) => ds.pairs.find((p) => p.id === input.source!.pairId)!.truth.slice(),
  };
}
const thrower: MatcherPlugin = {
  id: 'thrower',
  summary: 'always throws',
  version: '1',
  params: [],
  match: () => {
    throw new Error('kaboom\nsecond line');
  },
};
const shortOut: MatcherPlugin = { id: 'short', summary: 'wrong size', version: '1', params: [], match: () => new Float32Array(10) };


describe('executeRun', () => {
  it('scores a perfect matcher at zero error and records crashing / wrong-size matchers as failed', async () => {
    const ds = writeDataset(join(root, 'ds-run'));
    const runDir = join(root, 'run-1');
    const plan = await planWith(ds, [thrower, oracle(ds), shortOut], runDir, root);
    const seen: string[] = [];
    const out = await executeRun(plan, { onJob: (r) => seen.push(`${r.pair}/${r.matcher}`) });
    // 2 pairs x 3 configurations, pair by pair, labels sorted within a pair.
    expect(seen).toEqual(['crates-01/oracle', 'crates-01/short', 'crates-01/thrower', 'crates-02/oracle', 'crates-02/short', 'crates-02/thrower']);
    const lines = readFileSync(join(runDir, 'results.jsonl'), 'utf8').trim().split('\n');
    expect(lines).toHaveLength(6);
    const results = lines.map((l) => JSON.parse(l) as JobResult);
    const ok = results.find((r) => r.matcher === 'oracle')!;
    expect(ok.status).toBe('ok');
    // Prediction == truth: epe 0 and every bad-pixel rate 0 (README metric table: |e| > t).
    expect(ok.scores.known.figures.epe).toBe(0);
    expect(ok.scores.known.figures.rates).toEqual([0, 0, 0, 0, 0]);
    expect(ok.scores.known.figures.coverage).toBe(100);
    expect(ok.time_ms).toBeGreaterThanOrEqual(0);
    expect(ok.peak_mb).toBeGreaterThan(0);
    const bad = results.find((r) => r.matcher === 'thrower')!;
    expect(bad.status).toBe('failed');
    expect(bad.error).toBe('kaboom | second line');
    // A failed job scores as all-invalid (README, "Regions and metrics"): coverage 0, every rate 100 %, errors empty.
    expect(bad.scores.known.figures.coverage).toBe(0);
    expect(bad.scores.known.figures.rates).toEqual([100, 100, 100, 100, 100]);
    expect(bad.scores.known.figures.epe).toBeNull();
    const short = results.find((r) => r.matcher === 'short')!;
    expect(short.status).toBe('failed');
    expect(short.error).toMatch(/returned 10 values, expected 64x48 = 3072/);
    expect(out.info.jobs).toEqual({ total: 6, ok: 2, failed: 4 });
    // Previews only for finished (ok) jobs.
    expect(existsSync(join(runDir, 'previews', 'oracle'))).toBe(true);
    expect(existsSync(join(runDir, 'previews', 'thrower'))).toBe(false);
    const info = JSON.parse(readFileSync(join(runDir, 'run.json'), 'utf8'));
    expect(info.status).toBe('complete');
    expect(info.config.datasets[0].hash).toMatch(/^[0-9a-f]{64}$/);
    expect(info.environment.node).toBe(process.version);
    expect(existsSync(join(runDir, 'pairs.csv'))).toBe(true);
    expect(existsSync(join(runDir, 'summary.csv'))).toBe(true);
  });

  it('an abort stops after the current job, keeps the journal and writes tables', async () => {
    const ds = writeDataset(join(root, 'ds-abort'));
    const runDir = join(root, 'run-abort');
    const ac = new AbortController();
    const plan = await planWith(ds, [oracle(ds)], runDir, root);
    const out = await executeRun(plan, { signal: ac.signal, onJob: () => ac.abort() });
    expect(out.aborted).toBe(true);
    expect(out.results).toHaveLength(1);
    expect(JSON.parse(readFileSync(join(runDir, 'run.json'), 'utf8')).status).toBe('aborted');
    expect(readCsv(readFileSync(join(runDir, 'pairs.csv'), 'utf8')).rows.filter((x) => x.band === 'all')).toHaveLength(5); // the one job's five regions
  });

  it('imported predictions: PFM, NPY and PNG read, a missing or wrong-size file is a recorded failure', async () => {
    const ds = writeDataset(join(root, 'ds-pred'), { ids: ['a-pfm', 'b-npy', 'c-png', 'd-missing', 'e-size'] });
    const pd = join(root, 'preds');
    mkdirSync(pd, { recursive: true });
    const [a, b, c] = ds.pairs;
    writeFileSync(join(pd, 'a-pfm.pfm'), encodePfm({ width: 64, height: 48, data: a!.truth }));
    writeFileSync(join(pd, 'b-npy.npy'), encodeNpy({ width: 64, height: 48, data: b!.truth }, 'float64'));
    writeFileSync(join(pd, 'c-png.png'), encodePngDisparity({ width: 64, height: 48, data: c!.truth }, { scale: 16, bitDepth: 16 }));
    writeFileSync(join(pd, 'e-size.pfm'), encodePfm({ width: 32, height: 48, data: new Float32Array(32 * 48) }));
    const runDir = join(root, 'run-pred');
    const plan = await planRun(
      {
        datasets: [ds.dir],
        matchers: [],
        matcherEntries: [],
        predictions: [{ label: 'net-v2', dir: pd, scale: 16 }],
        thresholds: [...DEFAULT_THRESHOLDS],
        quantiles: [...DEFAULT_QUANTILES],
        regions: { ...DEFAULT_REGION_PARAMS },
        out: runDir,
        baseDir: root,
      },
      root,
    );
    const out = await executeRun(plan);
    const by = new Map(out.results.map((r) => [r.pair, r]));
    for (const id of ['a-pfm', 'b-npy', 'c-png']) {
      const r = by.get(id)!;
      expect(r.status).toBe('ok');
      expect(r.matcherId).toBe('predictions');
      expect(r.matcher).toBe('net-v2');
      // Truth written back as the prediction (integer disparities, exact in every format): epe 0.
      expect(r.scores.known.figures.epe).toBe(0);
      expect(r.time_ms).toBeNull();
    }
    expect(by.get('d-missing')!.status).toBe('failed');
    expect(by.get('d-missing')!.error).toMatch(/no prediction file d-missing/);
    expect(by.get('e-size')!.status).toBe('failed');
    expect(by.get('e-size')!.error).toMatch(/size 32x48 differs from the pair's 64x48/);
  });
});

describe('console table', () => {
  it('shows the 2 px rate when measured, else the middle threshold (documented choice in README)', async () => {
    const { keyThreshold } = await import('../../src/metrics/catalogue.js');
    expect(keyThreshold([0.25, 0.5, 1, 2, 3])).toBe(2);
    expect(keyThreshold([0.5, 1, 4])).toBe(1);
    expect(keyThreshold([3])).toBe(3);
  });

  it('one line per configuration and dataset, empty figures as "-"', async () => {
    const { consoleTable } = await import('../../src/report/console-table.js');
    const m = (mean: number | null) => ({ mean, n: 1, pooled: null, meanCi: null, pooledCi: null, detect: null });
    const row = (region: 'known' | 'visible', epe: number | null) => ({
      matcher: 'block',
      condition: 'clean',
      matcherId: 'block',
      dataset: 'dock',
      region,
      band: 'all',
      tag: null,
      n_pairs: 2,
      n_jobs: 2,
      n_failed: 1,
      unit: 'pair' as const,
      n_units: 2,
      metrics: { coverage: m(50), epe: m(epe), over2px: m(75), time_ms: m(12.34) },
    });
    const text = consoleTable([row('known', 1.5), row('visible', null)], [1, 2]);
    const lines = text.trimEnd().split('\n');
    expect(lines).toHaveLength(4); // header, rule, one row, the sort caption
    expect(lines[3]).toBe('sorted by known over2px, lowest first (pixels without an answer count as errors)');
    // Values as given above, formatted to the documented digits.
    expect(lines[2].split(/\s+/)).toEqual(['block', 'dock', '2', '1', '50.0', '1.500', '75.00', '50.0', '-', '75.00', '12.3']);
  });
});
