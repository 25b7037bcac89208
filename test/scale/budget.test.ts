/**
 * The pool and the matchers share one thread budget (MatchInput.threads =
 * max(1, floor(budget / jobs)), the README's `--threads` rule), module plugins run in the worker
 * threads, and program plugins (run from the main thread) work next to the pool.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parallax, requireBuild, smallDataset, wholeLines } from './helpers.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-budget-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));
const PAIRS = 3;
let ds: string;

beforeAll(async () => {
  requireBuild();
  ds = await smallDataset(join(root, 'ds'), PAIRS, 3);
  // Records, per call, the threads it was given and whether it ran in a worker thread.
  writeFileSync(
    join(root, 'probe.mjs'),
    `import { appendFileSync } from 'node:fs';
import { isMainThread } from 'node:worker_threads';
export default {
  id: 'probe', summary: 'test module: records MatchInput.threads', version: '1', params: [],
  match(input) {
    appendFileSync(process.env.PROBE_FILE, JSON.stringify({ threads: input.threads, main: isMainThread }) + '\\n');
    return new Float32Array(input.width * input.height).fill(input.minDisparity);
  },
};
`,
  );
}, 60_000);

function probe(args: string[], name: string): { threads: number; main: boolean }[] {
  const log = join(root, `${name}.log`);
  writeFileSync(log, '');
  const r = parallax(['run', '-d', ds, '-m', './probe.mjs', '--no-cache', '-o', join(root, name), '-q', ...args], root, { env: { PROBE_FILE: log } });
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  return readFileSync(log, 'utf8').trim().split('\n').map((l) => JSON.parse(l));
}

describe('thread budget', () => {
  it('--jobs 2 --threads 2: one thread per job, in worker threads', () => {
    const calls = probe(['--jobs', '2', '--threads', '2'], 'j2t2');
    expect(calls).toHaveLength(PAIRS);
    for (const c of calls) expect(c).toEqual({ threads: 1, main: false });
  }, 60_000);

  it('--jobs 1 --threads 2: the single job gets both threads, in one worker thread (a module has a time limit, which only a worker can enforce)', () => {
    for (const c of probe(['--jobs', '1', '--threads', '2'], 'j1t2')) expect(c).toEqual({ threads: 2, main: false });
  }, 60_000);

  it('--jobs 2 --threads 5: floor(5 / 2) = 2 each', () => {
    for (const c of probe(['--jobs', '2', '--threads', '5'], 'j2t5')) expect(c).toEqual({ threads: 2, main: false });
  }, 60_000);
});

describe('many tasks in flight', () => {
  it('--jobs 2 with 4 configurations x 3 pairs queued at once prints nothing on stderr (no listener warnings)', () => {
    const r = parallax(['run', '-d', ds, '-m', 'block', '-m', 'block:window=5', '-m', 'census', '-m', 'census:window=7', '--jobs', '2', '--no-cache', '-o', join(root, 'many'), '-q'], root);
    expect(r.stderr).toBe(''); // common practice: a clean run is silent under --quiet
    expect(r.code).toBe(0);
    expect(wholeLines(join(root, 'many', 'results.jsonl'))).toHaveLength(PAIRS * 4);
  }, 60_000);
});

describe('program plugins beside the pool', () => {
  it('an outside program (answers with the truth) scores zero error with --jobs 2', () => {
    const script = join(root, 'oracle.mjs');
    writeFileSync(script, `import { copyFileSync } from 'node:fs';\nconst [ds, pair, out] = process.argv.slice(2);\ncopyFileSync(ds + '/' + pair + '/truth.pfm', out);\n`);
    const exp = join(root, 'exp.json');
    writeFileSync(
      exp,
      JSON.stringify({
        datasets: ['ds'],
        matchers: ['block:window=5', { program: { id: 'oracle', command: [process.execPath, script, ds, '{pairId}', '{out}', '{left}', '{right}'], output: { format: 'pfm' } } }],
        out: 'exp-out',
      }),
    );
    const r = parallax(['run', exp, '--jobs', '2', '--no-cache', '-q'], root);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const results = wholeLines(join(root, 'exp-out', 'results.jsonl')).map((l) => JSON.parse(l));
    expect(results).toHaveLength(PAIRS * 2);
    // Output == truth: end-point error 0 over the known region (definition of epe).
    for (const x of results.filter((x) => x.matcher === 'oracle')) {
      expect(x.status).toBe('ok');
      expect(x.scores.known.figures.epe).toBe(0);
    }
  }, 90_000);
});
