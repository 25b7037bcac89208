/**
 * End to end: gating a tuning change as a CI job would. Named configurations, compare
 * by name, the verdict file, JUnit XML read by Debian's Python (xml.etree), honest exit
 * codes, parameter relations refused before any job, and module time limits.
 * The exit codes checked are the ones the README's "Exit codes" table documents.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEBIAN_PYTHON, runPython } from '../support/python.js';
import { builtCliExists, expectOneLineError, parallax } from './helpers.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-gate-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));
const ds = join(root, 'ds');
const PAIRS = 4;

beforeAll(() => {
  if (!builtCliExists()) throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
  expect(parallax(['dataset', 'synth', '--out', ds, '--width', '96', '--height', '72', '--pairs', String(PAIRS), '-q'], root).code).toBe(0);
  // Baseline: sgm at its defaults; candidate: p2 = 400. Both named "production".
  expect(parallax(['run', '-d', ds, '-m', 'production=sgm', '--no-cache', '-o', join(root, 'base'), '-q'], root).code).toBe(0);
  const exp = join(root, 'candidate.json');
  writeFileSync(exp, JSON.stringify({ datasets: ['ds'], matchers: [{ id: 'sgm', name: 'production', params: { p2: 400 } }], out: 'cand' }));
  expect(parallax(['run', exp, '--no-cache', '-q'], root).code).toBe(0);
}, 120_000);

describe('compare by configuration name', () => {
  it('pairs the two "production" runs and lists the p2 change; p2 = 400 is better here, so a zero allowance passes', () => {
    const r = parallax(['compare', join(root, 'base'), join(root, 'cand'), '--gate', 'visible/over2px:0'], root);
    expect(r.code).toBe(0);
    const md = readFileSync(join(root, 'cand', 'compare.md'), 'utf8');
    expect(md).toContain('### production');
    expect(md).toContain('param p2: 96 → 400');
    expect(md).toContain(join(root, 'base')); // the baseline's folder is named
    expect(md).toMatch(/interval excludes zero/); // the decision rule is stated
  }, 60_000);

  it('the other direction worsens visible/over2px: a small allowance fails (exit 1), a large one passes (exit 0); JUnit XML carries the failure', () => {
    const junit = join(root, 'gates.xml');
    const fail = parallax(['compare', join(root, 'cand'), join(root, 'base'), '--gate', 'visible/over2px:0.01', '--junit', junit, '--out', join(root, 'rev.md')], root);
    expect(fail.code).toBe(1);
    expect(readFileSync(join(root, 'rev.md'), 'utf8')).toContain('param p2: 400 → 96');
    const pass = parallax(['compare', join(root, 'cand'), join(root, 'base'), '--gate', 'visible/over2px:50', '--out', join(root, 'rev-pass.md')], root);
    expect(pass.code).toBe(0);
    // JUnit XML parsed by an outside XML parser (Python's xml.etree, Debian's python3).
    const parsed = JSON.parse(
      runPython({
        python: DEBIAN_PYTHON,
        code: [
          'import sys, json, xml.etree.ElementTree as ET',
          't = ET.parse(sys.argv[1] + "/g.xml").getroot()',
          'cases = [{"name": c.get("name"), "classname": c.get("classname"), "failed": c.find("failure") is not None, "message": (c.find("failure").get("message") if c.find("failure") is not None else None)} for c in t.iter("testcase")]',
          'print(json.dumps({"root": t.tag, "failures": t.get("failures"), "cases": cases}))',
        ].join('\n'),
        files: { 'g.xml': readFileSync(junit) },
      }),
    );
    expect(parsed.root).toBe('testsuites');
    expect(parsed.failures).toBe('1');
    expect(parsed.cases).toHaveLength(1);
    expect(parsed.cases[0]).toMatchObject({ name: 'visible/over2px:0.01', classname: 'parallax.production', failed: true });
    expect(parsed.cases[0].message).toMatch(/^worsening [\d.]+ > allowance 0.01$/);
  }, 60_000);

  it('differently named configurations pair with --pair, and without it the error says how', () => {
    const other = join(root, 'other');
    expect(parallax(['run', '-d', ds, '-m', 'tuned=sgm:p2=400', '--no-cache', '-o', other, '-q'], root).code).toBe(0);
    const none = parallax(['compare', join(root, 'base'), other], root);
    expect(none.code).toBe(2);
    expect(expectOneLineError(none)).toMatch(/no configuration in common .*--pair <baseline>=<candidate>/);
    const r = parallax(['compare', join(root, 'base'), other, '--pair', 'production=tuned', '--out', join(root, 'paired.md')], root);
    expect(r.code).toBe(0);
    const md = readFileSync(join(root, 'paired.md'), 'utf8');
    expect(md).toContain('### production → tuned');
    expect(md).toContain('--pair: baseline production compared with candidate tuned');
  }, 60_000);
});

describe('honest exit codes', () => {
  it('a run whose jobs all fail exits 3 and still writes its tables and report', () => {
    const mod = join(root, 'throws.mjs');
    writeFileSync(mod, `export default { id: 'throws', summary: 'always fails', params: [], match() { throw new Error('no answer today'); } };\n`);
    const out = join(root, 'all-failed');
    const r = parallax(['run', '-d', ds, '-m', mod, '--no-cache', '-o', out, '-q'], root);
    expect(r.code).toBe(3);
    for (const f of ['run.json', 'results.jsonl', 'pairs.csv', 'summary.csv', 'index.html']) expect(existsSync(join(out, f))).toBe(true);
    const lines = readFileSync(join(out, 'results.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(lines.map((l) => l.status)).toEqual(Array(PAIRS).fill('failed'));
  }, 60_000);

  it('sgm:p1=200,p2=100 is a usage error before any job: no journal is written', () => {
    const out = join(root, 'bad-relation');
    const r = parallax(['run', '-d', ds, '-m', 'sgm:p1=200,p2=100', '--no-cache', '-o', out], root);
    expect(r.code).toBe(2);
    expect(expectOneLineError(r)).toBe('parallax: --matcher: sgm: p1=200 must not exceed p2=100');
    expect(existsSync(join(out, 'results.jsonl'))).toBe(false);
  }, 30_000);

  it('a module that never returns is ended at its time limit; the other jobs finish', () => {
    const mod = join(root, 'hangs.mjs');
    writeFileSync(mod, `export default { id: 'hangs', summary: 'never returns', params: [], match() { for (;;) {} } };\n`);
    const exp = join(root, 'hang.json');
    writeFileSync(exp, JSON.stringify({ datasets: ['ds'], matchers: ['block', { id: './hangs.mjs', timeoutMs: 1500 }], out: 'hang-run' }));
    const t0 = Date.now();
    const r = parallax(['run', exp, '--no-cache', '-q'], root, { timeoutMs: 100_000 });
    const seconds = (Date.now() - t0) / 1000;
    expect(r.code).toBe(3);
    const lines = readFileSync(join(root, 'hang-run', 'results.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    const hung = lines.filter((l) => l.matcher === 'hangs');
    expect(hung).toHaveLength(PAIRS);
    for (const l of hung) expect(l.error).toMatch(/timed out after 1500 ms/);
    expect(lines.filter((l) => l.matcher === 'block' && l.status === 'ok')).toHaveLength(PAIRS);
    // Four limits of 1.5 s plus start-up: far below the 100 s the spawn allows (no hung run).
    expect(seconds).toBeLessThan(90);
  }, 120_000);
});
