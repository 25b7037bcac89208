/**
 * Interrupted runs, for real: a child `parallax run` is killed (SIGKILL), or stopped
 * with SIGINT / SIGTERM, part way; the journal must hold only whole lines and
 * `--resume` must finish the run with the tables of an uninterrupted one (timing
 * columns aside). Source of every check: the README's "Scaling out: jobs, resume, cache, shards"
 * (exit code 130 for Ctrl-C and 143 for SIGTERM: the shell convention 128 + the
 * signal's number, SIGINT 2 and SIGTERM 15).
 * The jobs are made slow on purpose by a module plugin that waits per pair.
 */
import { mkdtempSync, readFileSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exited, parallax, parallaxAsync, requireBuild, smallDataset, rowsPerJob, tableWithoutTimings, waitFor, wholeLines, writeSlowModule } from './helpers.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-interrupt-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

const PAIRS = 10;
const TOTAL = PAIRS * 2;
let ds: string;
let ref: string;
const M = ['-m', './slow.mjs:delay=120', '-m', 'block:window=5'];

function expectSameTables(a: string, b: string): void {
  expect(tableWithoutTimings(join(b, 'pairs.csv'))).toEqual(tableWithoutTimings(join(a, 'pairs.csv')));
  expect(tableWithoutTimings(join(b, 'summary.csv'))).toEqual(tableWithoutTimings(join(a, 'summary.csv')));
}

function journalKeys(dir: string): string[] {
  return wholeLines(join(dir, 'results.jsonl')).map((l) => {
    const r = JSON.parse(l) as { pair: string; matcher: string };
    return `${r.pair}/${r.matcher}`;
  });
}

beforeAll(async () => {
  requireBuild();
  ds = await smallDataset(join(root, 'ds'), PAIRS, 11);
  writeSlowModule(join(root, 'slow.mjs'));
  ref = join(root, 'ref');
  const r = parallax(['run', '-d', ds, ...M, '--jobs', '1', '--no-cache', '-o', ref, '-q'], root);
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  expect(wholeLines(join(ref, 'results.jsonl'))).toHaveLength(TOTAL);
}, 120_000);

describe('killed with SIGKILL', () => {
  it('part way: the journal holds some whole jobs; --resume completes with the tables of an uninterrupted run', async () => {
    const dir = join(root, 'killed');
    const child = parallaxAsync(['run', '-d', ds, ...M, '--jobs', '1', '--no-cache', '-o', dir, '-q'], root);
    const done = exited(child);
    const journal = join(dir, 'results.jsonl');
    await waitFor(() => wholeLines(journal).length >= 3, 60_000, 'three finished jobs');
    child.kill('SIGKILL');
    const ex = await done;
    expect(ex.signal).toBe('SIGKILL');
    const kept = wholeLines(journal);
    expect(kept.length).toBeGreaterThanOrEqual(3);
    expect(kept.length).toBeLessThan(TOTAL); // caught mid-run
    for (const l of kept) JSON.parse(l); // whole lines parse
    const r = parallax(['run', '--resume', dir, '--jobs', '1', '--no-cache', '-q'], root);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const keys = journalKeys(dir);
    expect(keys).toHaveLength(TOTAL); // nothing run twice
    expect(new Set(keys).size).toBe(TOTAL);
    expectSameTables(ref, dir);
    expect(JSON.parse(readFileSync(join(dir, 'run.json'), 'utf8')).status).toBe('complete');
  }, 180_000);
});

describe('stopped with a signal', () => {
  for (const [sig, jobs] of [['SIGINT', '2'], ['SIGTERM', '1']] as const) {
    it(`${sig} with --jobs ${jobs}: exit ${sig === 'SIGINT' ? 130 : 143}, whole journal lines, partial tables, a resume hint; --resume completes`, async () => {
      const dir = join(root, `stopped-${sig}`);
      const child = parallaxAsync(['run', '-d', ds, ...M, '--jobs', jobs, '--no-cache', '-o', dir, '-q'], root);
      const done = exited(child);
      const journal = join(dir, 'results.jsonl');
      await waitFor(() => wholeLines(journal).length >= 2, 60_000, 'two finished jobs');
      child.kill(sig);
      const ex = await done;
      expect(ex.code).toBe(sig === 'SIGINT' ? 130 : 143); // 128 + 2 / 128 + 15 (shell convention)
      const last = ex.stderr.trim().split('\n').pop()!;
      expect(last).toMatch(new RegExp(`resume with: parallax run --resume ${dir.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}$`));
      expect(ex.stderr).not.toMatch(/^\s+at /m); // no stack trace
      // With the pool, jobs in flight are cancelled, not finished (README, "Scaling out").
      if (sig === 'SIGINT') expect(ex.stderr).toContain('jobs in flight are cancelled');
      expect(ex.stderr).not.toContain('after the current job');
      const text = readFileSync(journal, 'utf8');
      expect(text.endsWith('\n')).toBe(true); // no torn line
      const lines = text.trimEnd().split('\n');
      for (const l of lines) JSON.parse(l);
      expect(lines.length).toBeLessThan(TOTAL);
      // Partial tables from the journal: 5 region rows per finished job.
      expect(existsSync(join(dir, 'pairs.csv'))).toBe(true);
      expect(tableWithoutTimings(join(dir, 'pairs.csv')).length - 1).toBe(lines.length * rowsPerJob(dir));
      expect(JSON.parse(readFileSync(join(dir, 'run.json'), 'utf8')).status).toBe('aborted');
      const r = parallax(['run', '--resume', dir, '--jobs', jobs, '--no-cache', '-q'], root);
      expect(r.stderr).toBe('');
      expect(r.code).toBe(0);
      expect(new Set(journalKeys(dir)).size).toBe(TOTAL);
      expect(journalKeys(dir)).toHaveLength(TOTAL);
      expectSameTables(ref, dir);
    }, 180_000);
  }
});
