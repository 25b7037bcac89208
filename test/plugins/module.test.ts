/**
 * Module plugins: the shipped example loads and matches; broken modules give clear
 * UsageErrors; installed packages resolve; code hashes follow the module's bytes;
 * experiment-file entries resolve with sweeps.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, mkdirSync, readFileSync, rmSync, writeFileSync, copyFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { UsageError } from '../../src/core/errors.js';
import { lcg32 } from '../support/rng.js';
import type { MatchOutput } from '../../src/core/matcher.js';
import {
  builtinCodeHash,
  builtinMatchers,
  pluginFromSource,
  resolveMatcherEntries,
  resolveMatchers,
} from '../../src/plugins/registry.js';

const REPO = resolve(__dirname, '..', '..');
const EXAMPLE = './matchers/examples/shift-matcher.mjs';
let tmp: string;

beforeAll(() => {
  tmp = mkdtempSync(join(tmpdir(), 'parallax-plugins-module-'));
});
afterAll(() => {
  rmSync(tmp, { recursive: true, force: true });
});

/** Deterministic pseudo-random texture (LCG, Numerical Recipes constants), values 0-255. */
function texture(n: number, seed: number): Float32Array {
  const out = new Float32Array(n);
  const next = lcg32(seed);
  for (let i = 0; i < n; i++) out[i] = next() >>> 24;
  return out;
}

/** Left image = right image shifted right by d: left(x) = right(x - d). */
function shiftedPair(width: number, height: number, d: number) {
  const wide = texture((width + d) * height, 7);
  const left = new Float32Array(width * height);
  const right = new Float32Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      right[y * width + x] = wide[y * (width + d) + x + d];
      left[y * width + x] = wide[y * (width + d) + x];
    }
  }
  return { left, right };
}

function disparityOf(r: Float32Array | MatchOutput): Float32Array {
  return r instanceof Float32Array ? r : r.disparity;
}

const PLUGIN_SRC = (id: string, extra = '') => `
export default {
  id: '${id}', summary: 'test module', version: '3',
  params: [{ name: 'k', type: 'int', default: 2, min: 0, max: 9, description: 'constant' }],
  match(input, params) { return new Float32Array(input.width * input.height).fill(params.k); },
};${extra}
`;

describe('the example module plugin', () => {
  it('loads through resolveMatchers with a sweep and recovers a constant shift', async () => {
    const configs = await resolveMatchers([`${EXAMPLE}:window=[3,7]`], { cwd: REPO });
    expect(configs.map((c) => c.label)).toEqual(['shift-sad:window=3', 'shift-sad:window=7']);
    expect(configs[0].params).toEqual({ window: 3, subpixel: true });
    expect(configs[0].source).toEqual({ kind: 'module', file: join(REPO, 'matchers/examples/shift-matcher.mjs') });
    // Worked example: a random texture shifted by exactly 5 px is matched exactly by SAD
    // wherever the whole window has a partner (x >= 5 + r), so the winner is d = 5 and the
    // parabola (equal neighbours up to noise) stays within half a pixel.
    const W = 64;
    const H = 48;
    const d = 5;
    const { left, right } = shiftedPair(W, H, d);
    for (const c of configs) {
      const r = (Number(c.params.window) - 1) / 2;
      const out = disparityOf(await c.plugin.match({ width: W, height: H, left, right, minDisparity: 0, maxDisparity: 12 }, c.params, new AbortController().signal));
      expect(out.length).toBe(W * H);
      let checked = 0;
      let good = 0;
      for (let y = 0; y < H; y++) {
        for (let x = d + r; x < W; x++) {
          checked++;
          if (Math.abs(out[y * W + x] - d) < 0.5) good++;
        }
      }
      expect(good).toBe(checked);
    }
  });

  it('hashes the module bytes: a copy hashes the same, an edit changes the hash', async () => {
    // Definition of the module code hash (README, "Result cache"): sha256 over the module file's bytes.
    const a = join(tmp, 'copy-a.mjs');
    const b = join(tmp, 'copy-b.mjs');
    copyFileSync(join(REPO, EXAMPLE), a);
    copyFileSync(join(REPO, EXAMPLE), b);
    const [ca] = await resolveMatchers([a]);
    const [cb] = await resolveMatchers([b]);
    expect(ca.codeHash).toMatch(/^[0-9a-f]{64}$/);
    expect(cb.codeHash).toBe(ca.codeHash);
    const c = join(tmp, 'copy-c.mjs');
    writeFileSync(c, `${readFileSync(a, 'utf8')}\n// edited\n`);
    const [cc] = await resolveMatchers([c]);
    expect(cc.codeHash).not.toBe(ca.codeHash);
  });
});

describe('broken modules', () => {
  const cases: [string, string, RegExp][] = [
    ['no-match.mjs', `export default { id: 'nm', summary: 's', params: [] };`, /lacks match$/],
    ['syntax.mjs', `export default {{;`, /^--matcher: cannot load module ".*syntax\.mjs": /],
    ['bad-id.mjs', `export default { id: 'has space', summary: 's', params: [], match() {} };`, /id must be a string/],
    [
      'bad-default.mjs',
      `export default { id: 'bd', summary: 's', params: [{ name: 'w', type: 'int', default: 4, odd: true, min: 1, max: 9, description: '' }], match() {} };`,
      /default of w is invalid/,
    ],
    ['not-array.mjs', `export default { id: 'na', summary: 's', params: {}, match() {} };`, /params must be an array/],
    ['clash.mjs', PLUGIN_SRC(builtinMatchers()[0]?.id ?? 'block'), /already taken by another matcher/],
  ];
  for (const [file, src, re] of cases) {
    it(`${file} -> one-line UsageError`, async () => {
      // Common practice: the error names the option and the module and says what is wrong.
      writeFileSync(join(tmp, file), src);
      const err = await resolveMatchers([`./${file}`], { cwd: tmp }).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(UsageError);
      const msg = (err as Error).message;
      expect(msg).toMatch(re);
      expect(msg.startsWith('--matcher: ')).toBe(true);
      expect(msg.includes('\n')).toBe(false);
    });
  }
});

describe('installed packages and named exports', () => {
  it('loads an ESM-only package by name from node_modules under cwd', async () => {
    // Node's package "exports" resolution (import condition), as documented by Node.js.
    const pkg = join(tmp, 'proj', 'node_modules', 'dock-test-matcher');
    mkdirSync(pkg, { recursive: true });
    writeFileSync(join(pkg, 'package.json'), JSON.stringify({ name: 'dock-test-matcher', type: 'module', exports: { '.': { import: './main.mjs' } } }));
    writeFileSync(join(pkg, 'main.mjs'), PLUGIN_SRC('dock-const'));
    const configs = await resolveMatchers(['dock-test-matcher:k=[1,4]'], { cwd: join(tmp, 'proj') });
    expect(configs.map((c) => c.label)).toEqual(['dock-const:k=1', 'dock-const:k=4']);
    const out = disparityOf(await configs[1].plugin.match({ width: 2, height: 2, left: new Float32Array(4), right: new Float32Array(4), minDisparity: 0, maxDisparity: 3 }, configs[1].params, new AbortController().signal));
    expect(Array.from(out)).toEqual([4, 4, 4, 4]);
    // The source rebuilds the same plugin (what a worker thread does).
    const again = await pluginFromSource(configs[0].source);
    expect(again.id).toBe('dock-const');
  });

  it('accepts a named `matcher` export and top-level exports', async () => {
    writeFileSync(join(tmp, 'named.mjs'), PLUGIN_SRC('named-one').replace('export default', 'export const matcher ='));
    writeFileSync(
      join(tmp, 'toplevel.mjs'),
      `export const id = 'top'; export const summary = 's'; export const params = []; export function match(i) { return new Float32Array(i.width * i.height); }`,
    );
    const configs = await resolveMatchers(['./named.mjs', './toplevel.mjs'], { cwd: tmp });
    expect(configs.map((c) => [c.label, c.plugin.version])).toEqual([
      ['named-one', '3'],
      ['top', '0'],
    ]);
  });
});

describe('experiment-file entries and built-in hashes', () => {
  it('resolves strings, {id, params} sweeps and programs (later strings may name a program)', async () => {
    writeFileSync(join(tmp, 'const.mjs'), PLUGIN_SRC('const-k'));
    const program = {
      id: 'echo-prog',
      command: [process.execPath, '-e', '0', '{left}', '{right}', '{out}'],
      output: { format: 'pfm' },
      params: [{ name: 'level', type: 'int', default: 1, min: 0, max: 5 }],
    };
    const configs = await resolveMatcherEntries(
      ['./const.mjs:k=5', { id: './const.mjs', params: { k: [0, 1] } }, { program, params: { level: [2, 3] } }, 'echo-prog:level=4'],
      { baseDir: tmp },
    );
    // Hand-worked: 1 + 2 + 2 + 1 configurations, in entry order then sweep order.
    expect(configs.map((c) => c.label)).toEqual([
      'const-k:k=5',
      'const-k:k=0',
      'const-k:k=1',
      'echo-prog:level=2',
      'echo-prog:level=3',
      'echo-prog:level=4',
    ]);
    expect(configs[3].source.kind).toBe('program');
    const err = await resolveMatcherEntries([{ program: { ...program, output: { format: 'png' } } }], { baseDir: tmp }).catch((e: unknown) => e);
    expect((err as Error).message).toBe('matchers[0].program: output.scale: required for png output (stored = round(d * scale))');
    const err2 = await resolveMatcherEntries([{ id: './const.mjs', params: { k: [10] } }], { baseDir: tmp }).catch((e: unknown) => e);
    expect((err2 as Error).message).toBe('matchers[0]: const-k: k=10 is out of range; allowed: int 0..9');
  });

  it('gives each built-in a stable 64-hex code hash that differs between matchers', () => {
    // Definition (README, "Result cache": the built-in matchers' sources): id + version + hash of the matchers folder.
    const list = builtinMatchers();
    const hashes = list.map((m) => builtinCodeHash(m));
    for (const h of hashes) expect(h).toMatch(/^[0-9a-f]{64}$/);
    expect(new Set(hashes).size).toBe(list.length);
    expect(list.map((m) => builtinCodeHash(m))).toEqual(hashes);
  });
});
