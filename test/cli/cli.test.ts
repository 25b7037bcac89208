/**
 * The CLI in process (runCli): option handling, experiment files, exit codes and
 * one-line messages. End-to-end runs of the built binary are in test/e2e.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it, vi } from 'vitest';
import { runCli } from '../../src/cli/app.js';
import { settingsFromArgs, type RunArgs } from '../../src/cli/commands/run.js';
import { InputError, UsageError } from '../../src/core/errors.js';
import { DEFAULT_REGION_PARAMS } from '../../src/core/regions.js';
import { loadExperimentFile, parseThresholds } from '../../src/runner/experiment.js';
import { writeDataset } from '../dataset/fixture.js';
import { readCsv } from '../e2e/helpers.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-cli-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

async function cli(args: string[]): Promise<{ code: number; err: string; out: string }> {
  let err = '';
  let out = '';
  const spy = vi.spyOn(process.stdout, 'write').mockImplementation((chunk: string | Uint8Array) => {
    out += String(chunk);
    return true;
  });
  // yargs prints help through console.log
  const logSpy = vi.spyOn(console, 'log').mockImplementation((...a: unknown[]) => {
    out += a.map(String).join(' ') + '\n';
  });
  try {
    const code = await runCli(args, { stderr: (t) => void (err += t) });
    return { code, err, out };
  } finally {
    spy.mockRestore();
    logSpy.mockRestore();
  }
}

const baseArgs: RunArgs = { quiet: true, json: false };

describe('run options', () => {
  it('--thresholds parses a comma list, sorted; bad values name the option', () => {
    expect(parseThresholds('2,0.5,1')).toEqual([0.5, 1, 2]);
    expect(() => parseThresholds('1,,2')).toThrow(UsageError);
    expect(() => parseThresholds('1,-2')).toThrow(/--thresholds: threshold -2/);
    expect(() => parseThresholds('1,1')).toThrow(/given twice/);
  });

  it('--label and --predictions go together; PNG options only with --predictions', () => {
    const d = ['x'];
    expect(() => settingsFromArgs({ ...baseArgs, dataset: d, label: 'n' }, root)).toThrow(/^--label: /);
    expect(() => settingsFromArgs({ ...baseArgs, dataset: d, predictions: 'p' }, root)).toThrow(/^--predictions: /);
    expect(() => settingsFromArgs({ ...baseArgs, dataset: d, matcher: ['block'], 'prediction-scale': 4 }, root)).toThrow(/^--prediction-scale: /);
    expect(() => settingsFromArgs({ ...baseArgs, dataset: d, predictions: 'p', label: 'n', 'prediction-scale': -1 }, root)).toThrow(/^--prediction-scale: must be/);
    expect(() => settingsFromArgs({ ...baseArgs, matcher: ['block'] }, root)).toThrow(/^--dataset: /);
    expect(() => settingsFromArgs({ ...baseArgs, dataset: d }, root)).toThrow(/^--matcher: /);
    const s = settingsFromArgs({ ...baseArgs, dataset: d, predictions: 'p', label: 'n', 'prediction-scale': 256, 'prediction-invalid': 0 }, root);
    expect(s.predictions).toEqual([{ label: 'n', dir: join(root, 'p'), scale: 256, invalid: 0 }]);
    // Defaults from core (README region parameter table) when nothing is given.
    expect(s.regions).toEqual(DEFAULT_REGION_PARAMS);
  });
});

describe('experiment files', () => {
  it('paths are relative to the file; thresholds and regions are taken', () => {
    const f = join(root, 'exp-ok.json');
    writeFileSync(f, JSON.stringify({ datasets: ['data/dock'], matchers: ['block'], thresholds: [2, 1], regions: { flatThreshold: 6 }, out: 'reports/x', name: 'tuning' }));
    const s = loadExperimentFile(f);
    expect(s.datasets).toEqual([join(root, 'data/dock')]);
    expect(s.out).toBe(join(root, 'reports/x'));
    expect(s.thresholds).toEqual([1, 2]);
    expect(s.regions).toEqual({ ...DEFAULT_REGION_PARAMS, flatThreshold: 6 });
    expect(s.matcherEntries).toEqual(['block']);
  });

  it('errors name the file and the field', () => {
    const cases: [unknown, RegExp][] = [
      [{ matchers: ['block'] }, /field datasets: /],
      [{ datasets: 'x' }, /field datasets: /],
      [{ datasets: ['x'], thresholds: [0] }, /field thresholds\[0\]: /],
      [{ datasets: ['x'], regions: { flatWindow: 4 } }, /field regions\.flatWindow: must be odd/],
      [{ datasets: ['x'], regions: { flatWidow: 9 } }, /flatWidow/],
      [{ datasets: ['x'], typo: 1 }, /typo/],
    ];
    cases.forEach(([body, re], i) => {
      const f = join(root, `exp-bad-${i}.json`);
      writeFileSync(f, JSON.stringify(body));
      let err: unknown;
      try {
        loadExperimentFile(f);
      } catch (e) {
        err = e;
      }
      expect(err).toBeInstanceOf(InputError);
      expect((err as Error).message.startsWith(f + ': ')).toBe(true);
      expect((err as Error).message).toMatch(re);
    });
    const bad = join(root, 'exp-json.json');
    writeFileSync(bad, '{');
    expect(() => loadExperimentFile(bad)).toThrow(/exp-json\.json: not valid JSON/);
  });

  it('runs an experiment with a built-in and an outside program; the program answers with the truth', async () => {
    const ds = writeDataset(join(root, 'exp-data'), { ids: ['lane-1', 'lane-2'] });
    // The outside program: copies the pair's truth PFM to {out} (so its score is known: zero error).
    const script = join(root, 'oracle.mjs');
    writeFileSync(
      script,
      `import { copyFileSync } from 'node:fs';\nconst [ds, pair, out] = process.argv.slice(2);\ncopyFileSync(ds + '/' + pair + '/truth.pfm', out);\n`,
    );
    const exp = join(root, 'exp-run.json');
    writeFileSync(
      exp,
      JSON.stringify({
        datasets: ['exp-data'],
        matchers: ['block:window=7', { program: { id: 'oracle', command: [process.execPath, script, ds.dir, '{pairId}', '{out}', '{left}', '{right}'], output: { format: 'pfm' } } }],
        thresholds: [1, 2],
        regions: { flatThreshold: 6 },
        out: 'exp-out',
      }),
    );
    const r = await cli(['run', exp, '--quiet']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const outDir = join(root, 'exp-out');
    const csv = readCsv(readFileSync(join(outDir, 'pairs.csv'), 'utf8'));
    // Threshold columns follow the experiment's thresholds.
    expect(csv.header.filter((h) => h.startsWith('over'))).toEqual(['over1px', 'over2px']);
    const oracleRows = csv.rows.filter((x) => x.matcher === 'oracle' && x.region === 'known' && x.band === 'all');
    expect(oracleRows).toHaveLength(2);
    // Output == truth: epe 0 (definition of end-point error).
    for (const row of oracleRows) expect(Number(row.epe)).toBe(0);
    expect(csv.rows.some((x) => x.matcher === 'block:window=7')).toBe(true);
    const info = JSON.parse(readFileSync(join(outDir, 'run.json'), 'utf8'));
    expect(info.config.regions.flatThreshold).toBe(6);
    expect(info.config.matchers.map((m: { label: string }) => m.label).sort()).toEqual(['block:window=7', 'oracle']);
  });

  it('a long-lived program\'s time_ms reply is the job\'s time_ms; the wall time is kept as wall_ms', async () => {
    const ds = writeDataset(join(root, 'exp-live'), { ids: ['lane-1'] });
    // Long-lived protocol (src/plugins/registry.ts, agreed API): one JSON request per line,
    // reply {"ok": true, "time_ms": n}. This program copies the truth, waits 80 ms and reports 2.5 ms.
    const script = join(root, 'live.mjs');
    writeFileSync(
      script,
      [
        `import { copyFileSync } from 'node:fs';`,
        `import { createInterface } from 'node:readline';`,
        `const ds = process.argv[2];`,
        `for await (const line of createInterface({ input: process.stdin })) {`,
        `  const q = JSON.parse(line);`,
        `  copyFileSync(ds + '/' + q.id + '/truth.pfm', q.out);`,
        `  await new Promise((r) => setTimeout(r, 80));`,
        `  process.stdout.write(JSON.stringify({ ok: true, time_ms: 2.5 }) + '\\n');`,
        `}`,
      ].join('\n'),
    );
    const exp = join(root, 'exp-live.json');
    writeFileSync(
      exp,
      JSON.stringify({
        datasets: ['exp-live'],
        matchers: [{ program: { id: 'live', mode: 'long-lived', command: [process.execPath, script, ds.dir], output: { format: 'pfm' } } }],
        out: 'exp-live-out',
      }),
    );
    const r = await cli(['run', exp, '--quiet', '--no-cache']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const job = JSON.parse(readFileSync(join(root, 'exp-live-out', 'results.jsonl'), 'utf8').trim());
    expect(job.status).toBe('ok');
    expect(job.time_ms).toBe(2.5); // the program's own figure (README, "Outputs": time_ms)
    expect(job.wall_ms).toBeGreaterThanOrEqual(79); // at least the 80 ms wait (timers may fire ~1 ms early)
  });

  it('a bad matcher entry in an experiment file names the file and the entry', async () => {
    writeDataset(join(root, 'exp-data2'), { ids: ['lane-1'] });
    const exp = join(root, 'exp-badmatcher.json');
    writeFileSync(exp, JSON.stringify({ datasets: ['exp-data2'], matchers: ['block', { program: { id: 'x' } }] }));
    const r = await cli(['run', exp, '--quiet']);
    expect(r.code).toBe(2);
    expect(r.err.trimEnd().split('\n')).toHaveLength(1);
    expect(r.err).toContain(exp);
    expect(r.err).toContain('matchers[1]');
  });
});

describe('command list', () => {
  it('top-level help lists dataset tools under `dataset` only', async () => {
    const r = await cli(['--help']);
    expect(r.code).toBe(0);
    // Our command layout (README CLI reference): check and synth are `dataset` actions.
    expect(r.out).toMatch(/parallax dataset\s/);
    expect(r.out).not.toMatch(/parallax (check|synth)\s/);
    for (const c of ['run', 'demo']) expect(r.out).toContain(`parallax ${c}`);
  });
});

describe('exit codes and messages', () => {
  it('usage errors from yargs: one line, exit 2', async () => {
    for (const args of [['run', '--nope'], ['frobnicate'], []]) {
      const r = await cli(args);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(/^parallax: .*\n$/);
      expect(r.err.trimEnd().split('\n')).toHaveLength(1);
    }
  });

  it('dataset check exits 1 when it finds problems and 0 when clean', async () => {
    const ds = writeDataset(join(root, 'chk'), { ids: ['a'] });
    expect((await cli(['dataset', 'check', ds.dir])).code).toBe(0);
    rmSync(join(ds.dir, 'a/truth.pfm'));
    const r = await cli(['dataset', 'check', ds.dir]);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/a\/truth\.pfm: missing file/);
  });

  it('--debug adds the stack trace of an error; without it there is none', async () => {
    const r = await cli(['run', '-d', join(root, 'nowhere'), '-m', 'block']);
    expect(r.code).toBe(2);
    expect(r.err).not.toMatch(/^\s+at /m);
    const d = await cli(['run', '-d', join(root, 'nowhere'), '-m', 'block', '--debug']);
    expect(d.code).toBe(2);
    expect(d.err).toMatch(/^\s+at /m);
  });

  it('leaves the caller\'s process.exitCode as it was', async () => {
    const before = process.exitCode;
    await cli(['frobnicate']);
    expect(process.exitCode).toBe(before);
  });
});
