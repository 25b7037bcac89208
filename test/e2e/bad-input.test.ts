/**
 * End to end, bad input: the built CLI must answer with one line on stderr naming the
 * file or option, no stack trace, and a non-zero exit code.
 * `npm test` builds dist/ first; when running vitest alone, run `npm run build` before.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodePng } from '../../src/io/png.js';
import { writeDataset, type WrittenDataset } from '../dataset/fixture.js';
import { builtCliExists, expectOneLineError, parallax } from './helpers.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-e2e-bad-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

beforeAll(() => {
  if (!builtCliExists()) throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
});

describe('bad input: one line on stderr naming the file or option, no stack trace, non-zero exit', () => {
  function brokenDataset(name: string, breakIt: (ds: WrittenDataset) => void): WrittenDataset {
    const ds = writeDataset(join(root, name), { ids: ['dock-1'] });
    breakIt(ds);
    return ds;
  }
  const run = (ds: string, ...more: string[]) => parallax(['run', '-d', ds, '-m', 'block', '--out', join(root, 'bad-out'), '--quiet', ...more], root);

  it('a truncated PFM truth', () => {
    const ds = brokenDataset('trunc', (d) => {
      const f = join(d.dir, 'dock-1/truth.pfm');
      writeFileSync(f, readFileSync(f).subarray(0, 100));
    });
    const r = run(ds.dir);
    expect(r.code).toBe(2);
    expect(expectOneLineError(r)).toContain(join(ds.dir, 'dock-1/truth.pfm'));
  });

  it('a PFM header that lies about the size', () => {
    const ds = brokenDataset('liar', (d) => {
      const f = join(d.dir, 'dock-1/truth.pfm');
      const body = readFileSync(f);
      // Same data, header claims 640x480.
      const text = body.toString('latin1');
      writeFileSync(f, Buffer.from(text.replace(/^Pf\s+64\s+48/, 'Pf\n640 480'), 'latin1'));
    });
    const r = run(ds.dir);
    expect(r.code).toBe(2);
    expect(expectOneLineError(r)).toContain(join(ds.dir, 'dock-1/truth.pfm'));
  });

  it('left and right of different sizes', () => {
    const ds = brokenDataset('sizes', (d) => {
      writeFileSync(join(d.dir, 'dock-1/right.png'), encodePng({ width: 60, height: 48, channels: 1, bitDepth: 8, data: new Uint8Array(60 * 48) }));
    });
    const r = run(ds.dir);
    expect(r.code).toBe(2);
    const line = expectOneLineError(r);
    expect(line).toContain('left.png');
    expect(line).toContain('right.png');
    expect(line).toContain('60x48');
    expect(line).toContain('64x48');
  });

  it('an unknown matcher', () => {
    const ds = writeDataset(join(root, 'um'), { ids: ['dock-1'] });
    const r = parallax(['run', '-d', ds.dir, '-m', 'no-such-matcher', '--out', join(root, 'um-out')], root);
    expect(r.code).toBe(2);
    expect(expectOneLineError(r)).toMatch(/^parallax: --matcher: .*no-such-matcher/);
  });

  it('a malformed manifest', () => {
    const ds = brokenDataset('malformed', (d) => {
      const f = join(d.dir, 'dataset.json');
      const m = JSON.parse(readFileSync(f, 'utf8'));
      m.disparityRange = 'wide';
      writeFileSync(f, JSON.stringify(m));
    });
    const r = run(ds.dir);
    expect(r.code).toBe(2);
    const line = expectOneLineError(r);
    expect(line).toContain(join(ds.dir, 'dataset.json'));
    expect(line).toContain('disparityRange');
  });

  it('a path escaping the dataset folder', () => {
    const ds = brokenDataset('escape', (d) => {
      const f = join(d.dir, 'dataset.json');
      const m = JSON.parse(readFileSync(f, 'utf8'));
      m.pairs[0].left = '../../etc/passwd';
      writeFileSync(f, JSON.stringify(m));
    });
    const r = run(ds.dir);
    expect(r.code).toBe(2);
    const line = expectOneLineError(r);
    expect(line).toContain(join(ds.dir, 'dataset.json'));
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

