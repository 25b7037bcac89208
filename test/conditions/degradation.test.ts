/**
 * Camera-fault conditions end to end, on rendered dock scenes (`dataset synth`):
 * - every built-in matcher's visible/over1px rises with the noise sigma and with the
 *   vertical shift: each level's mean is at least the lower end of the previous
 *   level's interval, and the strongest level's mean lies above clean's interval;
 * - under a right-camera gain, ZNCC block matching and census lose less than SAD block
 *   matching: ZNCC is invariant to an affine change of one window's values, census to any
 *   monotone one, SAD to neither (a property of the definitions; common practice);
 * - the tables carry the condition column, breaking.csv the breaking points, the report
 *   its faults section; run.json records the conditions and their seed;
 * - the cache keys hold the condition and the seed: a rerun is served from the cache,
 *   another noise seed recomputes the noise jobs only;
 * - an outside program receives the changed images, exactly as the condition makes them;
 * - a gate may name a condition (`visible~gain=1.5/over1px:1`).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PNG } from 'pngjs';
import { parallax, readCsv } from '../e2e/helpers.js';
import { loadManifest } from '../../src/dataset/manifest.js';
import { loadPair } from '../../src/dataset/load.js';
import { applyCondition } from '../../src/conditions/apply.js';

let root: string;
let data: string;
const MATCHERS = ['block', 'zncc=block:cost=zncc', 'census', 'sgm', 'bp'];
const LABELS = ['block', 'zncc', 'census', 'sgm', 'bp'];

type Row = Record<string, string>;
let summary: Row[];

function visibleRow(matcher: string, condition: string): Row {
  const r = summary.find((x) => x.matcher === matcher && x.condition === condition && x.region === 'visible' && x.band === 'all' && x.tag === '');
  if (!r) throw new Error(`no summary row for ${matcher} ${condition}`);
  return r;
}
const num = (r: Row, col: string): number => Number(r[col]);

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'plx-faults-'));
  data = join(root, 'data');
  expect(parallax(['dataset', 'synth', '--out', data, '--width', '160', '--height', '120', '--pairs', '6'], root).code).toBe(0);
  const args = ['run', '-d', data, ...MATCHERS.flatMap((m) => ['-m', m]), '--condition', 'noise=[4,12]', '--condition', 'vshift=[0.5,1.5]', '--condition', 'gain=1.5'];
  const r = parallax([...args, '--breaking-point', 'visible/over1px:3', '--jobs', '2', '--out', join(root, 'run'), '--quiet'], root, { timeoutMs: 280_000 });
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  summary = table(join(root, 'run', 'summary.csv')).rows;
}, 300_000);

const table = (file: string): ReturnType<typeof readCsv> => readCsv(readFileSync(file, 'utf8'));

describe('degradation on rendered scenes', () => {
  it.each([
    ['noise', ['clean', 'noise=4', 'noise=12']],
    ['vshift', ['clean', 'vshift=0.5', 'vshift=1.5']],
  ])('visible/over1px of every built-in matcher rises with %s', (_kind, levels) => {
    for (const m of LABELS) {
      const rows = levels.map((c) => visibleRow(m, c));
      for (let k = 1; k < rows.length; k++) expect(num(rows[k], 'mean_over1px'), `${m} ${levels[k]}`).toBeGreaterThanOrEqual(num(rows[k - 1], 'mean_over1px_lo'));
      expect(num(rows[rows.length - 1], 'mean_over1px'), m).toBeGreaterThan(num(rows[0], 'mean_over1px_hi'));
    }
  });

  it('ZNCC and census lose less than SAD under a gain change', () => {
    const loss = (m: string): number => num(visibleRow(m, 'gain=1.5'), 'mean_over1px') - num(visibleRow(m, 'clean'), 'mean_over1px');
    expect(loss('zncc')).toBeLessThan(loss('block'));
    expect(loss('census')).toBeLessThan(loss('block'));
    // SAD is far off (values 50 % brighter); ZNCC and census barely move (clipping at white only).
    expect(loss('block')).toBeGreaterThan(20);
    expect(Math.abs(loss('zncc'))).toBeLessThan(5);
    expect(Math.abs(loss('census'))).toBeLessThan(5);
  });

  it('writes the condition column, breaking.csv, the faults section and the record', () => {
    const pairs = table(join(root, 'run', 'pairs.csv'));
    expect(pairs.header.slice(0, 3)).toEqual(['matcher', 'condition', 'dataset']);
    expect(new Set(pairs.rows.map((r) => r.condition))).toEqual(new Set(['clean', 'noise=4', 'noise=12', 'vshift=0.5', 'vshift=1.5', 'gain=1.5']));
    const breaking = table(join(root, 'run', 'breaking.csv'));
    expect(breaking.header).toEqual(['matcher', 'dataset', 'kind', 'unit', 'rule', 'pairs', 'breaking', 'breaking_lo', 'breaking_hi', 'holds', 'worsening']);
    // One row per matcher and kind; SAD breaks under the gain, ZNCC does not (rule: over1px worse by > 3).
    expect(breaking.rows.length).toBe(LABELS.length * 3);
    const row = (m: string, kind: string): Row => breaking.rows.find((r) => r.matcher === m && r.kind === kind)!;
    const b = row('block', 'gain');
    expect([b.breaking, b.breaking_lo, b.breaking_hi, b.holds]).toEqual(['1.5', '1.5', '1.5', 'breaks']);
    expect(row('zncc', 'gain').holds).toBe('beyond');
    expect(row('sgm', 'vshift').rule).toBe('visible/over1px:3');
    const info = JSON.parse(readFileSync(join(root, 'run', 'run.json'), 'utf8'));
    expect(info.config.conditions).toEqual(['clean', 'gain=1.5', 'noise=4', 'noise=12', 'vshift=0.5', 'vshift=1.5']);
    expect(info.config.conditionSeed).toBe(1);
    const html = readFileSync(join(root, 'run', 'index.html'), 'utf8');
    expect(html).toContain('id="h-faults"');
    expect(html).toContain('id="sel-condition"');
  });
});

describe('dataset check --json', () => {
  it('prints one JSON document with per-pair vshift_px, vshift_spread_px and gain', () => {
    const r = parallax(['dataset', 'check', data, '--json'], root);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout) as { ok: boolean; pairs: { id: string; vshift_px: number; vshift_spread_px: number; gain: number }[] };
    expect(doc.ok).toBe(true);
    expect(doc.pairs).toHaveLength(6);
    for (const p of doc.pairs) {
      expect(typeof p.id).toBe('string');
      // The renderer's rig is rectified: rows agree to a small fraction of a pixel.
      expect(Math.abs(p.vshift_px)).toBeLessThan(0.1);
      expect(p.vshift_spread_px).toBeGreaterThanOrEqual(0);
      expect(p.gain).toBeGreaterThan(0.8);
    }
  });
});

describe('cache keys and programs', () => {
  it('a rerun comes from the cache; another noise seed recomputes the noise jobs only', () => {
    const run = (seed: string, out: string): ReturnType<typeof parallax> =>
      parallax(['run', '-d', data, '-m', 'block', '--condition', 'noise=4', '--condition', 'vshift=0.5', '--condition-seed', seed, '--out', join(root, out), '--quiet'], root);
    run('1', 'c1');
    const again = JSON.parse(readFileSync(join(root, 'c1', 'run.json'), 'utf8'));
    expect(again.cache.jobs_from_cache).toBe(18); // block under clean, noise=4, vshift=0.5 was run above (6 pairs each)
    run('2', 'c2');
    const other = JSON.parse(readFileSync(join(root, 'c2', 'run.json'), 'utf8'));
    expect(other.cache.jobs_from_cache).toBe(12);
    expect(other.cache.jobs_computed).toBe(6);
  });

  it('an outside program reads the images the condition made, and a gate can name the condition', async () => {
    const seen = join(root, 'seen');
    const prog = join(root, 'copy.mjs');
    writeFileSync(
      prog,
      `import { copyFileSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
const [, right, out, pairId] = process.argv.slice(2);
mkdirSync(${JSON.stringify(seen)}, { recursive: true });
copyFileSync(right, ${JSON.stringify(seen)} + '/' + pairId + '-' + process.hrtime.bigint() + '.png');
const png = readFileSync(right);
const w = png.readUInt32BE(16), h = png.readUInt32BE(20);
writeFileSync(out, Buffer.concat([Buffer.from('Pf\\n' + w + ' ' + h + '\\n-1.0\\n', 'latin1'), Buffer.alloc(w * h * 4)]));
`,
    );
    const exp = join(root, 'prog.json');
    writeFileSync(
      exp,
      JSON.stringify({
        datasets: [data],
        matchers: [{ program: { id: 'copier', command: ['node', prog, '{left}', '{right}', '{out}', '{pairId}'], output: { format: 'pfm' } } }],
        conditions: ['gain=1.5'],
      }),
    );
    const r = parallax(['run', exp, '--out', join(root, 'prog'), '--quiet'], root);
    expect(r.code).toBe(0);
    const files = readdirSync(seen);
    expect(files.length).toBe(12); // 6 pairs, clean and gain=1.5
    // Under clean the program reads the dataset's own file; under gain=1.5 an image written
    // for it, whose pixels equal the condition applied in this process (8-bit RGB).
    const m = loadManifest(data);
    const pair = await loadPair(m, m.pairs[0]);
    const faulted = applyCondition(pair, 'gain=1.5', 1);
    const rgb = (p: PNG): number[] => [...p.data].filter((_, i) => i % 4 !== 3);
    const got = files.filter((f) => f.startsWith(`${pair.id}-`)).map((f) => rgb(PNG.sync.read(readFileSync(join(seen, f)))));
    expect(got).toHaveLength(2);
    const want = [...faulted.right.data];
    const clean = rgb(PNG.sync.read(readFileSync(pair.files.right)));
    expect(got.filter((g) => g.length === want.length && g.every((v, i) => v === want[i]))).toHaveLength(1);
    expect(got.filter((g) => g.every((v, i) => v === clean[i]))).toHaveLength(1);
    expect(faulted.right.channels).toBe(3);
    // A gate naming the condition judges only its configurations; an unknown one is a usage error.
    const cmp = parallax(['compare', join(root, 'prog'), join(root, 'prog'), '--gate', 'visible~gain=1.5/over1px:1'], root);
    expect(cmp.code).toBe(0);
    expect(cmp.stdout).toMatch(/copier \[gain=1\.5\]/);
    const bad = parallax(['compare', join(root, 'prog'), join(root, 'prog'), '--gate', 'visible~noise=9/over1px:1'], root);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/condition noise=9 is not in the compared runs/);
  }, 120_000);
});

