/**
 * `parallax demo` runs on the same scheduler as `parallax run` with its defaults: the
 * worker pool (--jobs, default the cores) and the result cache (--no-cache to skip it).
 * Source: README, "parallax demo"; the built CLI on a 64x48 two-pair synthetic set.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { builtCliExists, expectOneLineError, parallax } from './helpers.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-e2e-demo-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

beforeAll(() => {
  if (!builtCliExists()) throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
});

describe('parallax demo uses the pool and the result cache', () => {
  it('a second demo run takes every job from the cache; --no-cache takes none; --jobs is checked', () => {
    const data = join(root, 'demo-data');
    expect(parallax(['dataset', 'synth', '--out', data, '--width', '64', '--height', '48', '--pairs', '2'], root).code).toBe(0);
    const demo = (out: string, ...more: string[]) => parallax(['demo', '--data', data, '--out', join(root, out), '-m', 'block', '-m', 'census', ...more], root);
    const info = (out: string) => JSON.parse(readFileSync(join(root, out, 'run.json'), 'utf8'));

    const first = demo('d1', '--jobs', '2');
    expect(first.stderr).toBe('');
    expect(first.code).toBe(0);
    // The cache folder defaults to .parallax-cache/ in the working folder (README).
    expect(info('d1').cache).toMatchObject({ dir: join(root, '.parallax-cache'), jobs_from_cache: 2, jobs_computed: 6 });
    // 2 matchers x (2 demo pairs + the depth and lidar sets' pair each): the lidar pair has the
    // depth pair's very images, so its two jobs come from the cache already (keys hash the images).

    const second = demo('d2', '--jobs', '2');
    expect(second.code).toBe(0);
    expect(info('d2').cache).toMatchObject({ jobs_from_cache: 8, jobs_computed: 0 });
    expect(second.stdout).toContain('8 of 8 job(s) came from the result cache');
    // Cached jobs score the same output: the same figures (common practice for a cache).
    const scores = (out: string) => readFileSync(join(root, out, 'results.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.stringify(JSON.parse(l).scores)).sort();
    expect(scores('d2')).toEqual(scores('d1'));

    const third = demo('d3', '--no-cache', '--jobs', '1', '-q');
    expect(third.code).toBe(0);
    expect(info('d3').cache).toBeNull();

    const bad = demo('d4', '--jobs', '0');
    expect(bad.code).toBe(2);
    expect(expectOneLineError(bad)).toMatch(/^parallax: --jobs: /);
  }, 120_000);
});
