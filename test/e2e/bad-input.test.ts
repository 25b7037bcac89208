/**
 * End to end, bad input, through the built CLI.
 *
 * - A broken pair (README, "Exit codes": "one broken pair or crashing matcher is recorded in the
 *   results as `failed` and the run goes on"): one line on stderr naming the file (both sizes for
 *   a mismatch) as it happens, no stack trace; the other pairs are scored, every table
 *   and the report are written, the broken pair's jobs are `failed`, exit code 2.
 * - A manifest-level error (malformed manifest, a path leaving the folder, unknown
 *   matcher, bad option) fails fast before any job: one line, exit 2.
 * `npm test` builds dist/ first; when running vitest alone, run `npm run build` before.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, unlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodePng } from '../../src/io/png.js';
import { writeDataset, type WrittenDataset } from '../dataset/fixture.js';
import { builtCliExists, expectOneLineError, parallax, readCsv } from './helpers.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-e2e-bad-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

beforeAll(() => {
  if (!builtCliExists()) throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
});

const W = 64;
const H = 48;

describe('a broken pair: recorded as failed, the other pair scored, tables and report written, exit 2', () => {
  function brokenDataset(name: string, breakIt: (ds: WrittenDataset) => void): WrittenDataset {
    const ds = writeDataset(join(root, name), { ids: ['dock-1', 'dock-2'] });
    breakIt(ds);
    return ds;
  }
  const out = (name: string): string => join(root, `${name}-out`);
  const run = (ds: string, name: string) => parallax(['run', '-d', ds, '-m', 'block', '--out', out(name), '--no-cache', '--quiet'], root);

  /**
   * The run went on: dock-2 scored ok, dock-1 failed with the file in its error,
   * pairs.csv / summary.csv / index.html written. Returns dock-1's `known` row.
   */
  function expectWentOn(name: string, file: string): Record<string, string> {
    const dir = out(name);
    const results = readFileSync(join(dir, 'results.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(results).toHaveLength(2); // one line per pair x configuration (README, "Outputs")
    const byPair = new Map(results.map((r) => [r.pair, r]));
    expect(byPair.get('dock-2').status).toBe('ok');
    // The fixture's left image is built from the right by the truth (exact matches), so
    // a block matcher gets most visible pixels within 1 px; an unscored pair would not.
    expect(byPair.get('dock-2').scores.visible.figures.coverage).toBeGreaterThan(50);
    expect(byPair.get('dock-1').status).toBe('failed');
    expect(byPair.get('dock-1').error).toContain(file);
    for (const f of ['run.json', 'pairs.csv', 'summary.csv', 'index.html']) expect(existsSync(join(dir, f))).toBe(true);
    const info = JSON.parse(readFileSync(join(dir, 'run.json'), 'utf8'));
    expect(info.status).toBe('complete');
    expect(info.jobs).toMatchObject({ total: 2, ok: 1, failed: 1 });
    expect(info.broken_pairs.map((b: { pair: string }) => b.pair)).toEqual(['dock-1']);
    const rows = readCsv(readFileSync(join(dir, 'pairs.csv'), 'utf8')).rows;
    expect(rows.filter((r) => r.band === 'all')).toHaveLength(2 * 5); // 2 jobs x 5 regions
    expect(rows.filter((r) => r.pair === 'dock-2').every((r) => r.status === 'ok')).toBe(true);
    const failed = rows.filter((r) => r.pair === 'dock-1');
    expect(failed.every((r) => r.status === 'failed')).toBe(true);
    return failed.find((r) => r.region === 'known' && r.band === 'all')!;
  }

  it('a truncated PFM truth: the pair cannot be scored (0 pixels, empty figures, out of the means)', () => {
    const ds = brokenDataset('trunc', (d) => {
      const f = join(d.dir, 'dock-1/truth.pfm');
      writeFileSync(f, readFileSync(f).subarray(0, 100));
    });
    const r = run(ds.dir, 'trunc');
    expect(r.code).toBe(2);
    expect(expectOneLineError(r)).toContain(join(ds.dir, 'dock-1/truth.pfm'));
    const known = expectWentOn('trunc', join(ds.dir, 'dock-1/truth.pfm'));
    // Documented choice (README "Broken pairs"): no truth, no pixels, empty cells.
    expect(known.pixels).toBe('0');
    expect(known.coverage).toBe('');
    expect(known['over2px']).toBe('');
    // README, "Regions and metrics": an empty region is left out of means over pairs; n_pairs says how many.
    const summary = readCsv(readFileSync(join(out('trunc'), 'summary.csv'), 'utf8')).rows;
    const row = summary.find((s) => s.region === 'known' && s.band === 'all' && (s.tag ?? '') === '')!;
    expect(row.n_pairs).toBe('1');
  });

  it('a PFM header that lies about the size', () => {
    const ds = brokenDataset('liar', (d) => {
      const f = join(d.dir, 'dock-1/truth.pfm');
      const text = readFileSync(f).toString('latin1');
      // Same data, header claims 640x480.
      writeFileSync(f, Buffer.from(text.replace(/^Pf\s+64\s+48/, 'Pf\n640 480'), 'latin1'));
    });
    const r = run(ds.dir, 'liar');
    expect(r.code).toBe(2);
    expect(expectOneLineError(r)).toContain(join(ds.dir, 'dock-1/truth.pfm'));
    expect(expectWentOn('liar', join(ds.dir, 'dock-1/truth.pfm')).pixels).toBe('0');
  });

  it('left and right of different sizes: both files and both sizes named; scored all-invalid against the truth', () => {
    const ds = brokenDataset('sizes', (d) => {
      writeFileSync(join(d.dir, 'dock-1/right.png'), encodePng({ width: 60, height: 48, channels: 1, bitDepth: 8, data: new Uint8Array(60 * 48) }));
    });
    const r = run(ds.dir, 'sizes');
    expect(r.code).toBe(2);
    const line = expectOneLineError(r);
    expect(line).toContain('left.png');
    expect(line).toContain('right.png');
    expect(line).toContain('60x48');
    expect(line).toContain('64x48');
    const known = expectWentOn('sizes', join(ds.dir, 'dock-1/right.png'));
    // The truth reads: every truth pixel is finite in the fixture, so `known` has W*H
    // pixels; README, "Regions and metrics": a failed job scores as all-invalid (coverage 0, every rate 100 %).
    expect(known.pixels).toBe(String(W * H));
    expect(Number(known.coverage)).toBe(0);
    expect(Number(known['over0.25px'])).toBe(100);
    expect(Number(known['over3px'])).toBe(100);
    expect(known.epe).toBe('');
  });

  it('a missing left image, not --quiet: the file line as it happens, a closing line, the table still printed', () => {
    const ds = brokenDataset('missing', (d) => unlinkSync(join(d.dir, 'dock-1/left.png')));
    const r = parallax(['run', '-d', ds.dir, '-m', 'block', '--out', out('missing'), '--no-cache'], root);
    expect(r.code).toBe(2);
    expect(r.stderr).not.toMatch(/^\s+at /m); // no stack trace
    const lines = r.stderr.trimEnd().split('\n');
    // Common practice: one line per problem, then one summary line; no per-job repeats.
    expect(lines).toHaveLength(2);
    expect(lines[0]).toContain(join(ds.dir, 'dock-1/left.png'));
    expect(lines[1]).toMatch(/1 pair\(s\) could not be loaded/);
    expect(r.stdout).toContain('2 job(s), 1 failed');
    // Truth reads, left does not: flat region needs the left image and is empty.
    expectWentOn('missing', join(ds.dir, 'dock-1/left.png'));
    const rows = readCsv(readFileSync(join(out('missing'), 'pairs.csv'), 'utf8')).rows;
    expect(rows.find((x) => x.pair === 'dock-1' && x.region === 'flat' && x.band === 'all')!.pixels).toBe('0');
    expect(rows.find((x) => x.pair === 'dock-1' && x.region === 'known' && x.band === 'all')!.pixels).toBe(String(W * H));
  });
});

describe('manifest-level errors: one line naming the file or option, exit 2, before any job', () => {
  const run = (ds: string, name: string) => parallax(['run', '-d', ds, '-m', 'block', '--out', join(root, `${name}-out`), '--no-cache', '--quiet'], root);
  /** A dataset whose manifest `edit` spoils, run: exit 2 with one line naming the manifest; returns the line. */
  const spoiled = (name: string, edit: (m: Record<string, unknown> & { pairs: Record<string, unknown>[] }) => void): { line: string; manifest: string } => {
    const ds = writeDataset(join(root, name), { ids: ['dock-1'] });
    const f = join(ds.dir, 'dataset.json');
    const m = JSON.parse(readFileSync(f, 'utf8'));
    edit(m);
    writeFileSync(f, JSON.stringify(m));
    const r = run(ds.dir, name);
    expect(r.code).toBe(2);
    return { line: expectOneLineError(r), manifest: f };
  };

  it('an unknown matcher', () => {
    const ds = writeDataset(join(root, 'um'), { ids: ['dock-1'] });
    const r = parallax(['run', '-d', ds.dir, '-m', 'no-such-matcher', '--out', join(root, 'um-out')], root);
    expect(r.code).toBe(2);
    expect(expectOneLineError(r)).toMatch(/^parallax: --matcher: .*no-such-matcher/);
    expect(existsSync(join(root, 'um-out', 'results.jsonl'))).toBe(false); // fails fast: no job ran
  });

  it('a malformed manifest', () => {
    const { line, manifest: f } = spoiled('malformed', (m) => {
      m.disparityRange = 'wide';
    });
    expect(line).toContain(f);
    expect(line).toContain('disparityRange');
    expect(existsSync(join(root, 'malformed-out', 'results.jsonl'))).toBe(false);
  });

  it('an unknown manifest key holding a newline is quoted on the one line', () => {
    const { line } = spoiled('hostile', (m) => {
      m['evil\nparallax: fake second line'] = 1;
    });
    // core/text.ts quote(): a newline byte is written as \x0a inside double quotes.
    expect(line).toContain('"evil\\x0aparallax: fake second line"');
  });

  it('a path escaping the dataset folder', () => {
    const { line, manifest: f } = spoiled('escape', (m) => {
      m.pairs[0]!.left = '../../etc/passwd';
    });
    expect(line).toContain(f);
    expect(line).toContain('../../etc/passwd');
  });

  it('an unknown option and a bad option value', () => {
    const r = parallax(['run', '--no-such-option'], root);
    expect(r.code).toBe(2);
    expectOneLineError(r);
    const r2 = parallax(['run', '-d', root, '-m', 'block', '--thresholds', '1,x'], root);
    expect(r2.code).toBe(2);
    expect(expectOneLineError(r2)).toMatch(/^parallax: --thresholds: /);
  });
});
