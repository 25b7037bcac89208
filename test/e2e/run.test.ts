/**
 * End to end: the built CLI (bin/parallax.js) on small datasets written here.
 * `npm test` builds dist/ first; when running vitest alone, run `npm run build` before.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync, mkdirSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeNpy } from '../../src/io/npy.js';
import { encodePfm } from '../../src/io/pfm.js';
import { encodePngDisparity } from '../../src/io/png.js';
import { writeDataset, type WrittenDataset } from '../dataset/fixture.js';
import { REPO, builtCliExists, expectOneLineError, parallax, readCsv } from './helpers.js';
import { spawnSync } from 'node:child_process';

const root = mkdtempSync(join(tmpdir(), 'parallax-e2e-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

const PAIRS_COLUMNS =
  'matcher,condition,dataset,pair,region,band,status,pixels,coverage,epe,rmse,bias,over0.25px,over0.5px,over1px,over2px,over3px,q50,q68,q95,depth_relerr,depth_rmse_m,depth_relmed,depth_over1pct,depth_over2pct,depth_over5pct,conf_auc,conf_oracle_auc,conf_gap,conf_clean_share,subpix_lock,flicker,time_ms,peak_mb';

beforeAll(() => {
  if (!builtCliExists()) throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
});

describe('parallax demo (on a small synthetic dataset)', () => {
  it('writes run.json, results.jsonl (one line per pair x configuration), pairs.csv, summary.csv', () => {
    const data = join(root, 'demo-data');
    const synth = parallax(['dataset', 'synth', '--out', data, '--width', '96', '--height', '72', '--pairs', '2'], root);
    expect(synth.code).toBe(0);
    expect(parallax(['dataset', 'check', data], root).stdout).toMatch(/^OK dock-demo: 2 pair\(s\), size 96x72/);
    const out = join(root, 'demo-report');
    const r = parallax(['demo', '--data', data, '--out', out], root);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/Demo done in [\d.]+ s/);
    const info = JSON.parse(readFileSync(join(out, 'run.json'), 'utf8'));
    expect(info.status).toBe('complete');
    const n = info.config.matchers.length;
    expect(n).toBeGreaterThanOrEqual(3); // block, census, sgm at least are built in
    const lines = readFileSync(join(out, 'results.jsonl'), 'utf8').trim().split('\n');
    expect(lines).toHaveLength(4 * n); // 2 demo pairs, and one pair each of the depth and lidar sets
    const pairs = readFileSync(join(out, 'pairs.csv'), 'utf8');
    expect(pairs.split('\n')[0]).toBe(PAIRS_COLUMNS);
    // one row per configuration, pair and region (5 regions, README "Outputs") with
    // band all, and more rows per depth band (the demo has a camera: default bands)
    const pairRows = readCsv(pairs).rows;
    expect(pairRows.filter((x) => x.band === 'all' && x.dataset === 'dock-demo')).toHaveLength(2 * n * 5);
    expect(new Set(pairRows.map((x) => x.dataset))).toEqual(new Set(['dock-demo', 'dock-depth', 'dock-lidar']));
    const bands = [...new Set(pairRows.map((x) => x.band))];
    expect(bands.length).toBeGreaterThan(1);
    for (const b of bands) if (b !== 'all') expect(b).toMatch(/^(\d+(\.\d+)?-\d+(\.\d+)?m|\d+(\.\d+)?m\+)$/);
    expect(existsSync(join(out, 'summary.csv'))).toBe(true);
    const summary = readCsv(readFileSync(join(out, 'summary.csv'), 'utf8'));
    // One row per configuration and region over all pairs (tag empty); rows per manifest
    // tag may follow (the synthetic pairs carry tags).
    expect(summary.rows.filter((x) => x.tag === '' && x.band === 'all' && x.dataset === 'dock-demo').length).toBe(n * 5);
    // The self-contained HTML report.
    expect(readFileSync(join(out, 'index.html'), 'utf8')).toMatch(/^<!DOCTYPE html>/i);
  });
});

describe('scoring predictions made elsewhere', () => {
  let ds: WrittenDataset;
  let preds: string;
  beforeAll(() => {
    ds = writeDataset(join(root, 'pred-data'), { ids: ['bay-a', 'bay-b', 'bay-c', 'bay-d'] });
    preds = join(root, 'preds');
    mkdirSync(preds, { recursive: true });
    const [a, b, c] = ds.pairs;
    // bay-a: PFM, exactly the truth. bay-b: NPY float32, truth + 0.75 everywhere.
    // bay-c: 16-bit PNG with scale 32, exactly the truth. bay-d: no file.
    writeFileSync(join(preds, 'bay-a.pfm'), encodePfm({ width: 64, height: 48, data: a!.truth }));
    writeFileSync(join(preds, 'bay-b.npy'), encodeNpy({ width: 64, height: 48, data: b!.truth.map((d) => d + 0.75) }));
    writeFileSync(join(preds, 'bay-c.png'), encodePngDisparity({ width: 64, height: 48, data: c!.truth }, { scale: 32, bitDepth: 16 }));
  });

  it('scores each file, records the missing one as failed, and the run goes on', () => {
    const out = join(root, 'pred-report');
    const r = parallax(['run', '-d', ds.dir, '--predictions', preds, '--label', 'net-v2', '--prediction-scale', '32', '--out', out, '--quiet'], root);
    expect(r.code).toBe(3); // README "Exit codes": a run with a failed job exits 3, its tables written
    expect(existsSync(join(out, 'index.html'))).toBe(true);
    const rows = readCsv(readFileSync(join(out, 'pairs.csv'), 'utf8')).rows.filter((x) => x.region === 'known' && x.band === 'all');
    const by = new Map(rows.map((x) => [x.pair, x]));
    for (const id of ['bay-a', 'bay-c']) {
      // A perfect prediction: |e| = 0 everywhere, so epe = 0 and over0.25px = 0 % (README metric table).
      expect(by.get(id)!.status).toBe('ok');
      expect(Number(by.get(id)!.epe)).toBe(0);
      expect(Number(by.get(id)!['over0.25px'])).toBe(0);
      expect(Number(by.get(id)!.coverage)).toBe(100);
    }
    // bay-b: e = +0.75 at every pixel (hand-worked): epe 0.75, bias 0.75, rmse 0.75,
    // over0.5px = 100 %, over1px = 0 %.
    const b = by.get('bay-b')!;
    expect(Number(b.epe)).toBeCloseTo(0.75, 6);
    expect(Number(b.bias)).toBeCloseTo(0.75, 6);
    expect(Number(b.rmse)).toBeCloseTo(0.75, 6);
    expect(Number(b['over0.5px'])).toBe(100);
    expect(Number(b['over1px'])).toBe(0);
    // bay-d: missing file -> failed, all-invalid: coverage 0, every rate 100 %, epe empty.
    const d = by.get('bay-d')!;
    expect(d.status).toBe('failed');
    expect(Number(d.coverage)).toBe(0);
    expect(Number(d['over0.25px'])).toBe(100);
    expect(d.epe).toBe('');
    expect(rows.every((x) => x.matcher === 'net-v2')).toBe(true);
    const results = readFileSync(join(out, 'results.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(results.every((x: { matcherId: string }) => x.matcherId === 'predictions')).toBe(true);
  });

  it('PNG predictions without --prediction-scale are a usage error naming the option', () => {
    const r = parallax(['run', '-d', ds.dir, '--predictions', preds, '--label', 'net-v2', '--out', join(root, 'x')], root);
    expect(r.code).toBe(2);
    expect(expectOneLineError(r)).toMatch(/^parallax: --prediction-scale: /);
  });

  it('--json prints the summary as JSON on stdout', () => {
    const r = parallax(['run', '-d', ds.dir, '--predictions', preds, '--label', 'net', '--prediction-scale', '32', '--out', join(root, 'j'), '--json'], root);
    expect(r.code).toBe(3); // one pair has no prediction file: a failed job (README "Exit codes")
    const j = JSON.parse(r.stdout);
    expect(j.jobs).toEqual({ total: 4, ok: 3, failed: 1 });
    expect(j.summary.filter((x: { band: string }) => x.band === 'all').length).toBe(5);
  });
});

describe('parallax dataset check', () => {
  it('exits 0 with an OK line on a clean dataset and non-zero listing problems otherwise', () => {
    const ds = writeDataset(join(root, 'chk'), { ids: ['p1', 'p2'] });
    const ok = parallax(['dataset', 'check', ds.dir], root);
    expect(ok.code).toBe(0);
    expect(ok.stdout).toMatch(/^OK dock-test: 2 pair\(s\)/);
    rmSync(join(ds.dir, 'p2/left.png'));
    const bad = parallax(['dataset', 'check', ds.dir], root);
    expect(bad.code).toBe(1);
    expect(bad.stdout).toMatch(/p2\/left\.png: missing file/);
    expect(bad.stdout).toMatch(/1 problem\(s\)/);
  });
});

describe('the quick start puts parallax on the PATH', () => {
  it('README: `npm link` then `parallax --version`; linking into a fresh npm prefix gives a working `parallax` command', () => {
    const readme = readFileSync(join(REPO, 'README.md'), 'utf8');
    const quick = readme.slice(readme.indexOf('## Quick start'), readme.indexOf('## Datasets'));
    expect(quick).toMatch(/^npm link\b/m);
    expect(quick).toMatch(/^parallax --version$/m);
    const prefix = join(root, 'npm-prefix');
    // --ignore-scripts: the build already ran (npm test builds first); the link is what is tested.
    const link = spawnSync('npm', ['link', '--ignore-scripts', '--no-audit', '--no-fund'], { cwd: REPO, encoding: 'utf8', env: { ...process.env, npm_config_prefix: prefix }, timeout: 60_000 });
    expect(link.status).toBe(0);
    const version = JSON.parse(readFileSync(join(REPO, 'package.json'), 'utf8')).version;
    const r = spawnSync('parallax', ['--version'], { cwd: root, encoding: 'utf8', env: { ...process.env, PATH: `${join(prefix, 'bin')}:${process.env.PATH}` } });
    expect(r.status).toBe(0);
    expect(r.stdout.trim()).toBe(version);
  }, 90_000);
});

describe('confidence maps from prediction folders and programs', () => {
  it('<pair>.conf.pfm beside a prediction is scored: a confidence of -|error| gives conf_gap 0 (the oracle ranking)', () => {
    const d = writeDataset(join(root, 'conf-data'), { ids: ['bay-a', 'bay-b'] });
    const dir = join(root, 'conf-preds');
    mkdirSync(dir, { recursive: true });
    let seed = 7;
    const noise = (): number => ((seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 2 ** 32 - 0.5) * 3; // LCG, Numerical Recipes constants
    for (const p of d.pairs) {
      const err = p.truth.map(() => noise());
      writeFileSync(join(dir, `${p.id}.pfm`), encodePfm({ width: 64, height: 48, data: p.truth.map((t, i) => t + err[i]) }));
      writeFileSync(join(dir, `${p.id}.conf.pfm`), encodePfm({ width: 64, height: 48, data: err.map((e) => -Math.abs(e)) }));
    }
    const out = join(root, 'conf-run');
    const r = parallax(['run', '-d', d.dir, '--predictions', dir, '--label', 'net', '--out', out, '-q'], root);
    expect(r.stderr).toBe(''); // the .conf.pfm files are not "files of no pair"
    expect(r.code).toBe(0);
    const rows = readCsv(readFileSync(join(out, 'pairs.csv'), 'utf8')).rows.filter((x) => x.region === 'known' && x.band === 'all');
    expect(rows).toHaveLength(2);
    for (const row of rows) {
      expect(Number(row.conf_gap)).toBe(0);
      expect(Number(row.conf_auc)).toBeGreaterThan(0);
      expect(Number(row.conf_auc)).toBeLessThan(Number(row.epe)); // the kept shares are the smaller errors
    }
  }, 60_000);

  it('a per-pair program that writes {conf} has its confidence scored; without it the figures stay empty', () => {
    const d = writeDataset(join(root, 'prog-data'), { ids: ['bay-a'] });
    // The program answers with the truth shifted by 0.5 px where x is odd, and rates those pixels lower.
    const prog = join(root, 'conf-prog.mjs');
    writeFileSync(
      prog,
      [
        "import { readFileSync, writeFileSync } from 'node:fs';",
        'const [truthFile, out, , , conf] = process.argv.slice(2); // {left} and {right} are not read',
        'const buf = readFileSync(truthFile);',
        "let p = 0; const line = () => { const s = p; while (buf[p] !== 10) p++; return buf.toString('latin1', s, p++); };",
        'line(); const [w, h] = line().split(/\\s+/).map(Number); const scale = Number(line());',
        'const data = new Float32Array(buf.buffer.slice(buf.byteOffset + p, buf.byteOffset + p + 4 * w * h));',
        'const write = (file, values) => writeFileSync(file, Buffer.concat([Buffer.from(`Pf\\n${w} ${h}\\n${scale}\\n`, "latin1"), Buffer.from(values.buffer)]));',
        'write(out, data.map((v, i) => v + ((i % w) % 2 ? 0.5 : 0)));',
        'if (conf) write(conf, data.map((_, i) => ((i % w) % 2 ? 0 : 1)));',
      ].join('\n'),
    );
    const def = (id: string, withConf: boolean) => ({
      program: { id, command: ['node', prog, `${d.dir}/{pairId}/truth.pfm`, '{out}', '{left}', '{right}', ...(withConf ? ['{conf}'] : [])], output: { format: 'pfm' } },
    });
    const exp = join(root, 'conf-prog.json');
    writeFileSync(exp, JSON.stringify({ datasets: [d.dir], matchers: [def('with-conf', true), def('without-conf', false)], out: join(root, 'conf-prog-run') }));
    const r = parallax(['run', exp, '--no-cache', '-q'], root);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const rows = readCsv(readFileSync(join(root, 'conf-prog-run', 'pairs.csv'), 'utf8')).rows.filter((x) => x.region === 'known' && x.band === 'all');
    const by = new Map(rows.map((x) => [x.matcher, x]));
    // With confidence: the exact half (even x) comes first, so the 50 % point of the curve is 0 and conf_gap is 0.
    expect(Number(by.get('with-conf')!.conf_gap)).toBe(0);
    expect(by.get('without-conf')!.conf_auc).toBe('');
  }, 60_000);
});

describe('sequences: flicker between consecutive frames', () => {
  it('frames of a group are scored against their predecessor, in frame order whatever the pair ids; the first frame has none', () => {
    // Pair ids sort as c, a, d, b while the frames run a(0), b(1), c(2), d(3).
    const d = writeDataset(join(root, 'seq-data'), { ids: ['seq-c', 'seq-a', 'seq-d', 'seq-b'] });
    const manifestFile = join(d.dir, 'dataset.json');
    const m = JSON.parse(readFileSync(manifestFile, 'utf8'));
    const frameOf: Record<string, number> = { 'seq-a': 0, 'seq-b': 1, 'seq-c': 2, 'seq-d': 3 };
    for (const p of m.pairs) Object.assign(p, { group: 'drive', frame: frameOf[p.id] });
    writeFileSync(manifestFile, JSON.stringify(m));
    // Predictions: truth + independent Gaussian noise (sigma 0.5) per frame -> flicker 2 sigma / sqrt(pi) = 0.564 (textbook).
    const dir = join(root, 'seq-preds');
    mkdirSync(dir, { recursive: true });
    let s = 99;
    const u = (): number => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) + 0.5) / 2 ** 32; // LCG, Numerical Recipes constants
    const gauss = (): number => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u()); // Box-Muller
    for (const p of d.pairs) writeFileSync(join(dir, `${p.id}.pfm`), encodePfm({ width: 64, height: 48, data: p.truth.map((t) => t + 0.5 * gauss()) }));
    const out = join(root, 'seq-run');
    const r = parallax(['run', '-d', d.dir, '--predictions', dir, '--label', 'noisy', '--jobs', '2', '--no-cache', '--out', out, '-q'], root);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const rows = readCsv(readFileSync(join(out, 'pairs.csv'), 'utf8')).rows.filter((x) => x.region === 'known' && x.band === 'all');
    const by = new Map(rows.map((x) => [x.pair, x]));
    expect(by.get('seq-a')!.flicker).toBe('');
    for (const id of ['seq-b', 'seq-c', 'seq-d']) expect(Math.abs(Number(by.get(id)!.flicker) - 0.5642) / 0.5642, id).toBeLessThan(0.08);
    // A frame index without a group is refused, naming the field.
    m.pairs[0].group = undefined;
    writeFileSync(manifestFile, JSON.stringify(m));
    const bad = parallax(['dataset', 'check', d.dir], root);
    expect(bad.code).toBe(1); // README: dataset check exits 1 when it finds problems
    expect(bad.stdout + bad.stderr).toMatch(/pairs\[0\]\.frame: a frame index needs the pair's "group"/);
  }, 60_000);
});

describe('the demo sequence', () => {
  it('is rendered with a moving camera, and the truth scored as a prediction has flicker 0 on it', () => {
    const data = join(root, 'demo-seq');
    expect(parallax(['dataset', 'synth', '--out', data, '--width', '96', '--height', '72', '-q'], root).code).toBe(0);
    const m = JSON.parse(readFileSync(join(data, 'dataset.json'), 'utf8'));
    const frames = m.pairs.filter((p: { frame?: number }) => p.frame !== undefined);
    expect(frames.map((p: { id: string; group: string; frame: number }) => [p.id, p.group, p.frame])).toEqual([
      ['drive-00', 'drive', 0],
      ['drive-01', 'drive', 1],
      ['drive-02', 'drive', 2],
    ]);
    // The camera moves: the truth changes from frame to frame.
    expect(readFileSync(join(data, 'drive-00', 'truth.pfm')).equals(readFileSync(join(data, 'drive-01', 'truth.pfm')))).toBe(false);
    const preds = join(root, 'demo-seq-truth');
    mkdirSync(preds, { recursive: true });
    for (const p of frames) writeFileSync(join(preds, `${p.id}.pfm`), readFileSync(join(data, p.id, 'truth.pfm')));
    const out = join(root, 'demo-seq-run');
    // Only the frames have predictions: the other pairs fail (exit 3), which is not what is checked here.
    const r = parallax(['run', '-d', data, '--predictions', preds, '--label', 'truth', '--out', out, '-q'], root);
    expect(r.code).toBe(3);
    const rows = readCsv(readFileSync(join(out, 'pairs.csv'), 'utf8')).rows.filter((x) => x.region === 'known' && x.band === 'all' && x.pair.startsWith('drive-'));
    expect(rows.map((x) => x.flicker)).toEqual(['', '0', '0']);
  }, 60_000);
});
