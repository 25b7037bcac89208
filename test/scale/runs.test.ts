/**
 * Scaled runs end to end through the built CLI (bin/parallax.js -> dist/): the worker
 * pool, the result cache, shards and merge, resume after a torn journal line, and the
 * refusal of dataset paths that leave the folder through a symbolic link.
 * Behavioural checks; their source is the README's "Scaling out: jobs, resume, cache, shards" unless
 * a comment names another.
 */
import { cpSync, mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, truncateSync, appendFileSync, writeFileSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parallax, requireBuild, rowsPerJob, smallDataset, tableWithoutTimings, wholeLines } from './helpers.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-scale-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

const PAIRS = 6;
const M = ['-m', 'block', '-m', 'census'];
let ds: string;
/** Reference: one sequential run without the cache. */
let ref: string;

function jobKeys(runDir: string): string[] {
  return wholeLines(join(runDir, 'results.jsonl'))
    .map((l) => JSON.parse(l) as { dataset: string; pair: string; matcher: string })
    .map((r) => `${r.dataset}/${r.pair}/${r.matcher}`)
    .sort();
}

function expectSameTables(a: string, b: string): void {
  expect(tableWithoutTimings(join(b, 'pairs.csv'))).toEqual(tableWithoutTimings(join(a, 'pairs.csv')));
  expect(tableWithoutTimings(join(b, 'summary.csv'))).toEqual(tableWithoutTimings(join(a, 'summary.csv')));
}

beforeAll(async () => {
  requireBuild();
  ds = await smallDataset(join(root, 'ds'), PAIRS);
  ref = join(root, 'ref');
  const r = parallax(['run', '-d', ds, ...M, '--jobs', '1', '--no-cache', '-o', ref, '-q'], root);
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
}, 120_000);

/** A copy of a folder under the test root, to spoil without touching the original. */
function copyUnderRoot(src: string, name: string): string {
  const dest = join(root, name);
  cpSync(src, dest, { recursive: true });
  return dest;
}

describe('worker pool', () => {
  it('--jobs 2 writes the same tables as --jobs 1 (timing columns aside)', () => {
    const out = join(root, 'jobs2');
    const r = parallax(['run', '-d', ds, ...M, '--jobs', '2', '--no-cache', '-o', out, '-q'], root);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(jobKeys(out)).toEqual(jobKeys(ref));
    expect(jobKeys(out)).toHaveLength(PAIRS * 2);
    expectSameTables(ref, out);
    // The pair rows really came out of the table writer sorted (pairs.csv sorts by matcher, dataset, pair).
    const rows = tableWithoutTimings(join(out, 'pairs.csv')).slice(1);
    expect(rows.length).toBe(PAIRS * 2 * rowsPerJob(out)); // 5 regions (README, "Regions and metrics"), whole and per depth band
  }, 120_000);
});

describe('result cache', () => {
  it('a rerun with one configuration changed recomputes only that configuration', () => {
    const cache = join(root, 'cache');
    const a = join(root, 'cache-a');
    const b = join(root, 'cache-b');
    const ra = parallax(['run', '-d', ds, ...M, '--jobs', '2', '--cache-dir', cache, '-o', a], root);
    expect(ra.code).toBe(0);
    expect(ra.stdout).toContain(`0 of ${PAIRS * 2} job(s) came from the result cache`);
    // census changed (window 7), block unchanged.
    const rb = parallax(['run', '-d', ds, '-m', 'block', '-m', 'census:window=7', '--jobs', '2', '--cache-dir', cache, '-o', b], root);
    expect(rb.code).toBe(0);
    expect(rb.stdout).toContain(`${PAIRS} of ${PAIRS * 2} job(s) came from the result cache`);
    const info = JSON.parse(readFileSync(join(b, 'run.json'), 'utf8'));
    expect(info.cache).toMatchObject({ jobs_from_cache: PAIRS, jobs_computed: PAIRS });
    // Cached jobs say so and keep the original time_ms.
    const resA = new Map(wholeLines(join(a, 'results.jsonl')).map((l) => { const r = JSON.parse(l); return [`${r.pair}/${r.matcher}`, r]; }));
    for (const line of wholeLines(join(b, 'results.jsonl'))) {
      const r = JSON.parse(line);
      if (r.matcher === 'block') {
        expect(r.cached).toBe(true);
        expect(r.time_ms).toBe(resA.get(`${r.pair}/block`).time_ms);
        expect(r.scores).toEqual(resA.get(`${r.pair}/block`).scores);
      } else expect(r.cached).toBeUndefined();
    }
    // Scores from cached outputs equal freshly computed ones: the same run without the cache.
    const c = join(root, 'cache-c');
    expect(parallax(['run', '-d', ds, '-m', 'block', '-m', 'census:window=7', '--jobs', '1', '--no-cache', '-o', c, '-q'], root).code).toBe(0);
    expectSameTables(c, b);
    // New thresholds reuse the cache too (scores are recomputed from the disparity).
    const d = join(root, 'cache-d');
    const rd = parallax(['run', '-d', ds, ...M, '--thresholds', '0.5,1.5', '--cache-dir', cache, '-o', d], root);
    expect(rd.code).toBe(0);
    expect(rd.stdout).toContain(`${PAIRS * 2} of ${PAIRS * 2} job(s) came from the result cache`);
    // cache info / prune: LRU down to 0 MiB empties it.
    const info1 = parallax(['cache', 'info', '--cache-dir', cache, '--json'], root);
    expect(JSON.parse(info1.stdout).entries).toBe(PAIRS * 3); // block, census, census:window=7
    const pr = parallax(['cache', 'prune', '--max-mb', '0', '--cache-dir', cache, '--json'], root);
    expect(JSON.parse(pr.stdout)).toMatchObject({ removed: PAIRS * 3, entries: 0, bytes: 0 });
  }, 180_000);

  it('a cache that cannot be written does not end the run; run.json counts the failed writes', () => {
    const notADir = join(root, 'cache-is-a-file');
    writeFileSync(notADir, 'x');
    const out = join(root, 'cache-ro');
    const r = parallax(['run', '-d', ds, '-m', 'block', '--cache-dir', notADir, '-o', out, '-q'], root);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const info = JSON.parse(readFileSync(join(out, 'run.json'), 'utf8'));
    expect(info.cache).toMatchObject({ jobs_from_cache: 0, jobs_computed: PAIRS, write_errors: PAIRS });
    expect(info.jobs.ok).toBe(PAIRS);
  }, 60_000);

  it('$PARALLAX_CACHE names the cache folder when --cache-dir is not given', () => {
    const cache = join(root, 'env-cache');
    const r = parallax(['run', '-d', ds, '-m', 'block', '-o', join(root, 'env-run'), '-q'], root, { env: { PARALLAX_CACHE: cache } });
    expect(r.code).toBe(0);
    expect(JSON.parse(parallax(['cache', 'info', '--json'], root, { env: { PARALLAX_CACHE: cache } }).stdout).entries).toBe(PAIRS);
  }, 60_000);
});

describe('shards and merge', () => {
  it('three shards merged equal one run; each pair in exactly one shard', () => {
    const dirs = [1, 2, 3].map((k) => join(root, `shard-${k}`));
    dirs.forEach((dir, i) => {
      const r = parallax(['run', '-d', ds, ...M, '--shard', `${i + 1}/3`, '--jobs', '1', '--no-cache', '-o', dir, '-q'], root);
      expect(r.stderr).toBe('');
      expect(r.code).toBe(0);
    });
    const keys = dirs.map(jobKeys);
    // Round-robin over 6 sorted pairs: 2 pairs (x 2 configurations) per shard.
    for (const k of keys) expect(k).toHaveLength(4);
    expect(keys.flat().sort()).toEqual(jobKeys(ref));
    const pairsOf = (k: string[]): Set<string> => new Set(k.map((s) => s.split('/')[1]));
    expect([...pairsOf(keys[0])].filter((p) => pairsOf(keys[1]).has(p) || pairsOf(keys[2]).has(p))).toEqual([]);
    const out = join(root, 'merged');
    const m = parallax(['merge', ...dirs, '--out', out], root);
    expect(m.stderr).toBe('');
    expect(m.code).toBe(0);
    expect(jobKeys(out)).toEqual(jobKeys(ref));
    expectSameTables(ref, out);
    expect(JSON.parse(readFileSync(join(out, 'run.json'), 'utf8')).status).toBe('complete');
    // The same shard twice: identical duplicates are kept once.
    const out2 = join(root, 'merged-dup');
    const m2 = parallax(['merge', dirs[0], ...dirs, '--out', out2], root);
    expect(m2.code).toBe(0);
    expect(m2.stdout).toContain('4 duplicate job(s) kept once');
    expectSameTables(ref, out2);
  }, 180_000);

  it('merge refuses runs of another configuration, and differing copies of one job', () => {
    const other = join(root, 'other-thr');
    expect(parallax(['run', '-d', ds, ...M, '--shard', '2/3', '--thresholds', '1,2', '--no-cache', '-o', other, '-q'], root).code).toBe(0);
    const r = parallax(['merge', join(root, 'shard-1'), other, '--out', join(root, 'bad-merge')], root);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toContain(join(other, 'run.json'));
    expect(r.stderr).toMatch(/thresholds differ/);
    // A copy of shard 1 whose journal has one job's scores altered.
    const forged = copyUnderRoot(join(root, 'shard-1'), 'forged');
    const lines = readFileSync(join(forged, 'results.jsonl'), 'utf8').trimEnd().split('\n');
    const first = JSON.parse(lines[0]);
    first.scores.known.sums.sumAbs += 1;
    lines[0] = JSON.stringify(first);
    writeFileSync(join(forged, 'results.jsonl'), lines.join('\n') + '\n');
    const r2 = parallax(['merge', join(root, 'shard-1'), forged, '--out', join(root, 'bad-merge2')], root);
    expect(r2.code).toBe(2);
    expect(r2.stderr).toMatch(/differs from the same job/);
  }, 120_000);
});

describe('resume', () => {
  it('a journal with a half-written last line resumes: the torn line is cut, the rest is run, tables equal', () => {
    const dir = copyUnderRoot(ref, 'torn');
    const journal = join(dir, 'results.jsonl');
    const lines = readFileSync(journal, 'utf8').trimEnd().split('\n');
    expect(lines).toHaveLength(PAIRS * 2);
    // Keep 7 whole lines, then half of the 8th without its newline (a write cut short).
    writeFileSync(journal, lines.slice(0, 7).join('\n') + '\n');
    appendFileSync(journal, lines[7].slice(0, Math.floor(lines[7].length / 2)));
    const before = statSync(journal).size;
    truncateSync(join(dir, 'pairs.csv'), 0);
    const r = parallax(['run', '--resume', dir, '--jobs', '2', '--no-cache', '-q'], root);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(statSync(journal).size).toBeGreaterThan(before);
    const after = readFileSync(journal, 'utf8');
    expect(after.endsWith('\n')).toBe(true);
    const parsed = after.trimEnd().split('\n').map((l) => JSON.parse(l)); // every line parses
    expect(parsed).toHaveLength(PAIRS * 2); // 7 kept + 5 run again, none twice
    expect(jobKeys(dir)).toEqual(jobKeys(ref));
    expectSameTables(ref, dir);
  }, 120_000);

  it('--resume refuses a run whose dataset changed since, and takes no other settings', () => {
    const ds2 = copyUnderRoot(ds, 'ds-changing');
    const dir = join(root, 'changing');
    expect(parallax(['run', '-d', ds2, '-m', 'block', '--no-cache', '-o', dir, '-q'], root).code).toBe(0);
    // The right image of one pair replaced by another pair's: the dataset hash changes.
    writeFileSync(join(ds2, 'syn-0000', 'right.png'), readFileSync(join(ds2, 'syn-0001', 'right.png')));
    const r = parallax(['run', '--resume', dir, '-q'], root);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/--resume: .*dataset "dock-small" differs/);
    const r2 = parallax(['run', '--resume', dir, '-m', 'census'], root);
    expect(r2.code).toBe(2);
    expect(r2.stderr).toMatch(/--resume: takes every setting from the run folder/);
  }, 120_000);
});

describe('hostile input and bad options', () => {
  it('a dataset whose image is a symbolic link leading out of its folder is refused', () => {
    const d = copyUnderRoot(ds, 'ds-link');
    const outside = join(root, 'outside.png');
    cpSync(join(d, 'syn-0001', 'left.png'), outside);
    rmSync(join(d, 'syn-0001', 'left.png'));
    symlinkSync(outside, join(d, 'syn-0001', 'left.png'));
    const r = parallax(['run', '-d', d, '-m', 'block', '--no-cache', '-o', join(root, 'link-run')], root);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/syn-0001\/left\.png.*symbolic link/);
  }, 60_000);

  it('bad --shard, --jobs and --cache options are one-line usage errors', () => {
    mkdirSync(join(root, 'opts'), { recursive: true });
    for (const [args, pattern] of [
      [['--shard', '4/3'], /--shard: shard 4 is not in 1\.\.3/],
      [['--shard', 'two'], /--shard: "two" is not of the form k\/N/],
      [['--jobs', '0'], /--jobs: must be a whole number/],
      [['--no-cache', '--cache-dir', 'x'], /--cache-dir: cannot be used with --no-cache/],
    ] as const) {
      const r = parallax(['run', '-d', ds, '-m', 'block', ...args], join(root, 'opts'));
      expect(r.code).toBe(2);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(pattern);
    }
  }, 60_000);
});
