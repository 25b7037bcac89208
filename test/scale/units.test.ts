/**
 * The pieces of scaled runs one by one: shards, the cache key and entry format, LRU
 * pruning, journal recovery, the thread budget, the worker file location and the
 * configuration comparison behind --resume and merge. Sources are named per check.
 */
import fc from 'fast-check';
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { appendFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError, UsageError } from '../../src/core/errors.js';
import { cacheKey, decodeEntry, encodeEntry, listEntries, pruneCache, ResultCache, type CacheKeyParts } from '../../src/runner/cache.js';
import { enumerateJobs, groupByPair } from '../../src/runner/jobs.js';
import { recoverJournal } from '../../src/runner/journal.js';
import { workerFile } from '../../src/runner/pool.js';
import type { RunConfigRecord } from '../../src/io/run-record.js';
import { configDifference } from '../../src/runner/resume.js';
import { threadsPerJob } from '../../src/runner/scale.js';
import { parseShard, shardJobs } from '../../src/runner/shard.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-scale-units-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

describe('shards', () => {
  it('parses k/N and refuses the rest as --shard usage errors', () => {
    expect(parseShard('2/5')).toEqual({ index: 2, count: 5 });
    expect(parseShard(' 1 / 1 ')).toEqual({ index: 1, count: 1 });
    for (const bad of ['0/3', '4/3', '1/0', '1', 'a/b', '1/2/3', '-1/2', '']) {
      expect(() => parseShard(bad)).toThrow(UsageError);
      expect(() => parseShard(bad)).toThrow(/^--shard: /);
    }
  });

  it('frames of one sequence stay in one shard; the units still partition the jobs', () => {
    const all = enumerateJobs([{ name: 'd', pairIds: ['f0', 'f1', 'f2', 'f3', 'x', 'y'] }], ['m']);
    // f0..f3 are one sequence; x and y are single pairs.
    const unitOf = (_: string, pair: string): string | undefined => (pair.startsWith('f') ? 'seq' : undefined);
    const shards = [1, 2, 3].map((index) => shardJobs(all, { index, count: 3 }, unitOf).map((k) => k.pair));
    expect(shards).toEqual([['f0', 'f1', 'f2', 'f3'], ['x'], ['y']]);
  });

  it('property: shards partition the job list, keep each pair whole, keep the order, and balance pairs within one (issue requirement, round-robin)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.constantFrom('a', 'b', 'c'), fc.integer({ min: 0, max: 40 })), { minLength: 0, maxLength: 4 }),
        fc.integer({ min: 1, max: 4 }),
        fc.integer({ min: 1, max: 7 }),
        (dsSpec, nLabels, count) => {
          const datasets = [...new Map(dsSpec).entries()].map(([name, n]) => ({ name, pairIds: Array.from({ length: n }, (_, i) => `p${i}`) }));
          const labels = Array.from({ length: nLabels }, (_, i) => `m${i}`);
          const all = enumerateJobs(datasets, labels);
          const shards = Array.from({ length: count }, (_, i) => shardJobs(all, { index: i + 1, count }));
          const key = (k: { dataset: string; pair: string; label: string }): string => `${k.dataset}/${k.pair}/${k.label}`;
          // Partition: every job exactly once.
          expect(shards.flat().map(key).sort()).toEqual(all.map(key).sort());
          // Order inside a shard is the sorted order of the full list.
          const pos = new Map(all.map((k, i) => [key(k), i]));
          for (const s of shards) for (let i = 1; i < s.length; i++) expect(pos.get(key(s[i]))!).toBeGreaterThan(pos.get(key(s[i - 1]))!);
          // A pair's configurations stay together, and shares differ by at most one pair.
          const pairCounts = shards.map((s) => groupByPair(s).length);
          for (const s of shards) for (const g of groupByPair(s)) expect(g).toHaveLength(nLabels);
          const total = groupByPair(all).length;
          expect(pairCounts.reduce((a, b) => a + b, 0)).toBe(total);
          expect(Math.max(...pairCounts) - Math.min(...pairCounts)).toBeLessThanOrEqual(1);
        },
      ),
      { numRuns: 300 },
    );
  });
});

describe('cache key', () => {
  const base: CacheKeyParts = { leftHash: 'aa', rightHash: 'bb', matcherId: 'block', codeHash: 'cc', params: { window: 9, cost: 'sad' }, minDisparity: 0, maxDisparity: 64 };

  it('is the sha256 of the documented canonical JSON (cross-checked with Python hashlib)', () => {
    // Canonical text written out by hand from the recipe in cache.ts (params keys sorted).
    const text = '{"format":"parallax-disparity-cache/2","left":"aa","right":"bb","matcherId":"block","codeHash":"cc","params":{"cost":"sad","window":9},"range":[0,64]}';
    const py = spawnSync('python3', ['-c', 'import hashlib,sys; print(hashlib.sha256(sys.stdin.buffer.read()).hexdigest())'], { input: text, encoding: 'utf8' });
    expect(py.status).toBe(0);
    expect(cacheKey(base)).toBe(py.stdout.trim());
  });

  it('changes with every part and not with the order of parameter keys (common practice for content addressing)', () => {
    const k = cacheKey(base);
    expect(cacheKey({ ...base, params: { cost: 'sad', window: 9 } })).toBe(k);
    const variants: CacheKeyParts[] = [
      { ...base, leftHash: 'ab' },
      { ...base, rightHash: 'bc' },
      { ...base, matcherId: 'census' },
      { ...base, codeHash: 'cd' },
      { ...base, params: { window: 7, cost: 'sad' } },
      { ...base, params: { window: '9', cost: 'sad' } },
      { ...base, minDisparity: -1 },
      { ...base, maxDisparity: 63 },
    ];
    const keys = new Set([k, ...variants.map(cacheKey)]);
    expect(keys.size).toBe(variants.length + 1);
  });
});

describe('cache entries', () => {
  const data = new Float32Array([0, -0, 1.5, NaN, -3.25, 1e-30, 65504, 7]);

  it('round-trip bit for bit, and numpy reads the data at the documented offset as little-endian float32', () => {
    const buf = encodeEntry({ width: 4, height: 2, data, timeMs: 12.5, peakMb: 80, matcherId: 'block' });
    const back = decodeEntry(buf)!;
    expect(back.width).toBe(4);
    expect(back.height).toBe(2);
    expect(back.timeMs).toBe(12.5);
    expect(back.peakMb).toBe(80);
    for (let i = 0; i < data.length; i++) expect(Object.is(back.data[i], data[i])).toBe(true);
    // Layout: "PXD1", uint32 LE header length L, header, padding to 4, float32 LE.
    expect(buf.toString('latin1', 0, 4)).toBe('PXD1');
    const L = buf.readUInt32LE(4);
    const offset = Math.ceil((8 + L) / 4) * 4;
    const file = join(root, 'entry.pxd');
    writeFileSync(file, buf);
    const py = spawnSync(
      'python3',
      ['-c', `import numpy as np,sys; a=np.fromfile(sys.argv[1],dtype='<f4',offset=${offset}); print(' '.join(repr(float(v)) for v in a))`, file],
      { encoding: 'utf8' },
    );
    expect(py.stderr).toBe('');
    expect(py.stdout.trim()).toBe('0.0 -0.0 1.5 nan -3.25 1.0000000031710769e-30 65504.0 7.0');
  });

  it('a confidence map is a second plane after the disparity, read back bit for bit (numpy reads it at offset + 4 * n)', () => {
    const conf = new Float32Array([0.5, -1, 2, 3, NaN, 0, 1e-3, -7]);
    const buf = encodeEntry({ width: 4, height: 2, data, confidence: conf, timeMs: 1, peakMb: 2, matcherId: 'sgm' });
    const back = decodeEntry(buf)!;
    for (let i = 0; i < data.length; i++) expect(Object.is(back.data[i], data[i])).toBe(true);
    for (let i = 0; i < conf.length; i++) expect(Object.is(back.confidence![i], conf[i])).toBe(true);
    expect(decodeEntry(encodeEntry({ width: 4, height: 2, data, timeMs: 1, peakMb: 2, matcherId: 'sgm' }))!.confidence).toBeNull();
    const offset = Math.ceil((8 + buf.readUInt32LE(4)) / 4) * 4 + 4 * data.length;
    const file = join(root, 'entry-conf.pxd');
    writeFileSync(file, buf);
    const py = spawnSync('python3', ['-c', `import numpy as np,sys; a=np.fromfile(sys.argv[1],dtype='<f4',offset=${offset}); print(' '.join(repr(float(v)) for v in a))`, file], { encoding: 'utf8' });
    expect(py.stdout.trim()).toBe('0.5 -1.0 2.0 3.0 nan 0.0 0.0010000000474974513 -7.0');
  });

  it('truncated, garbled or foreign bytes are not entries', () => {
    const buf = encodeEntry({ width: 4, height: 2, data, timeMs: null, peakMb: null, matcherId: 'x' });
    expect(decodeEntry(buf.subarray(0, buf.length - 1))).toBeUndefined();
    expect(decodeEntry(Buffer.concat([buf, Buffer.alloc(4)]))).toBeUndefined();
    expect(decodeEntry(Buffer.from('PXD1'))).toBeUndefined();
    const bad = Buffer.from(buf);
    bad[0] = 0x51;
    expect(decodeEntry(bad)).toBeUndefined();
    const hdr = Buffer.from(buf);
    hdr.writeUInt32LE(0xffffff, 4);
    expect(decodeEntry(hdr)).toBeUndefined();
    expect(decodeEntry(new Uint8Array(0))).toBeUndefined();
  });

  it('a cache folder: miss, put, hit (with hit and miss counts); a corrupt entry is a miss and is removed', async () => {
    const dir = join(root, 'c1');
    const c = new ResultCache(dir);
    const key = 'ab'.repeat(32);
    expect(c.get(key, 4, 2)).toBeUndefined();
    await c.put(key, { width: 4, height: 2, data, timeMs: 3, peakMb: 1, matcherId: 'block' });
    expect(c.get(key, 4, 2)!.data[2]).toBe(1.5);
    expect(c.get(key, 5, 2)).toBeUndefined(); // another size: not this entry
    expect(listEntries(dir)).toHaveLength(0); // ...and such an entry is dropped
    await c.put(key, { width: 4, height: 2, data, timeMs: 3, peakMb: 1, matcherId: 'block' });
    const file = listEntries(dir)[0].path;
    appendFileSync(file, 'xx');
    expect(c.get(key, 4, 2)).toBeUndefined();
    expect(existsSync(file)).toBe(false);
    expect({ hits: c.hits, misses: c.misses }).toEqual({ hits: 1, misses: 3 });
  });

  it('prune removes least recently used entries first, down to the limit', async () => {
    const dir = join(root, 'c2');
    const c = new ResultCache(dir);
    const keys = ['01', '02', '03', '04'].map((p) => p.repeat(32));
    for (const k of keys) await c.put(k, { width: 4, height: 2, data, timeMs: 1, peakMb: 1, matcherId: 'm' });
    const entries = listEntries(dir);
    const size = entries[0].bytes;
    // Last use: key 3 oldest, then 1, then 4, then 2 (hand-set modification times).
    const t = Date.now() / 1000;
    const ages: Record<string, number> = { '01': 300, '02': 100, '03': 400, '04': 200 };
    for (const e of entries) {
      const age = ages[e.path.split('/').pop()!.slice(0, 2)];
      utimesSync(e.path, t - age, t - age);
    }
    // A hit refreshes: key 3 becomes the newest.
    expect(c.get(keys[2], 4, 2)).toBeDefined();
    const r = pruneCache(dir, 2 * size);
    expect(r).toEqual({ removed: 2, freedBytes: 2 * size, entries: 2, bytes: 2 * size });
    const left = listEntries(dir).map((e) => e.path.split('/').pop()!.slice(0, 2)).sort();
    expect(left).toEqual(['02', '03']);
    expect(pruneCache(dir, 0).entries).toBe(0);
    expect(pruneCache(join(root, 'nowhere'), 0)).toEqual({ removed: 0, freedBytes: 0, entries: 0, bytes: 0 });
  });
});

describe('journal recovery (--resume)', () => {
  const line = (pair: string): string => JSON.stringify({ matcher: 'block', dataset: 'd', pair, status: 'ok' }) + '\n';

  it('cuts a torn last line away and keeps whole lines', () => {
    const f = join(root, 'j1.jsonl');
    writeFileSync(f, line('a') + line('b') + line('c').slice(0, 20));
    expect(recoverJournal(f).map((r) => r.pair)).toEqual(['a', 'b']);
    expect(readFileSync(f, 'utf8')).toBe(line('a') + line('b'));
    // A torn line that happens to be valid JSON is cut too: it had no newline, so it was not complete.
    writeFileSync(f, line('a') + line('b').trimEnd());
    expect(recoverJournal(f).map((r) => r.pair)).toEqual(['a']);
    expect(readFileSync(f, 'utf8')).toBe(line('a'));
  });

  it('a journal with no newline at all is empty; a missing one is created empty; a bad middle line is an InputError naming the file', () => {
    const f = join(root, 'j2.jsonl');
    writeFileSync(f, '{"matcher":');
    expect(recoverJournal(f)).toEqual([]);
    expect(readFileSync(f, 'utf8')).toBe('');
    const g = join(root, 'j3.jsonl');
    expect(recoverJournal(g)).toEqual([]);
    expect(existsSync(g)).toBe(true);
    writeFileSync(f, line('a') + 'not json\n' + line('b'));
    expect(() => recoverJournal(f)).toThrow(InputError);
    expect(() => recoverJournal(f)).toThrow(/j2\.jsonl: line 2 is not valid JSON/);
  });
});

describe('thread budget and worker file', () => {
  it('each job gets max(1, floor(budget / jobs)) threads (issue requirement)', () => {
    expect(threadsPerJob(2, 2)).toBe(1);
    expect(threadsPerJob(2, 1)).toBe(2);
    expect(threadsPerJob(8, 3)).toBe(2);
    expect(threadsPerJob(2, 4)).toBe(1);
    expect(threadsPerJob(1, 0)).toBe(1);
  });

  it('the worker is the compiled dist/ file, from the sources and from dist/ alike', () => {
    expect(workerFile('file:///x/parallax/src/runner/pool.ts')).toBe('/x/parallax/dist/src/runner/worker.js');
    expect(workerFile('file:///x/parallax/dist/src/runner/pool.js')).toBe('/x/parallax/dist/src/runner/worker.js');
  });
});

describe('configuration comparison (--resume, merge)', () => {
  const cfg: RunConfigRecord = {
    thresholds: [1, 2],
    quantiles: [50, 68, 95],
    regions: { flatWindow: 5, flatThreshold: 4 },
    matchers: [
      { label: 'block', matcherId: 'block', kind: 'matcher', params: { window: 9 }, codeHash: 'h1' },
      { label: 'census', matcherId: 'census', kind: 'matcher', params: { window: 5 }, codeHash: 'h2' },
    ],
    datasets: [{ name: 'dock', path: '/a/dock', manifest: '/a/dock/dataset.json', hash: 'd1', pairs: 4 }],
  };
  const clone = (): RunConfigRecord => JSON.parse(JSON.stringify(cfg));

  it('agrees when only paths or the order of configurations differ', () => {
    const b = clone();
    b.matchers.reverse();
    b.datasets[0].path = '/elsewhere/dock';
    b.datasets[0].manifest = '/elsewhere/dock/dataset.json';
    expect(configDifference(cfg, b)).toBeUndefined();
  });

  it('names the first difference: thresholds, regions, a dataset hash, a configuration', () => {
    const t = clone();
    t.thresholds = [1, 3];
    expect(configDifference(cfg, t)).toMatch(/thresholds differ/);
    const r = clone();
    r.regions.flatThreshold = 5;
    expect(configDifference(cfg, r)).toMatch(/region parameters differ/);
    const d = clone();
    d.datasets[0].hash = 'd2';
    expect(configDifference(cfg, d)).toMatch(/dataset "dock" differs/);
    const p = clone();
    p.matchers[1].params = { window: 7 };
    expect(configDifference(cfg, p)).toMatch(/configuration "census" differs/);
    const c = clone();
    c.matchers[0].codeHash = 'h9';
    expect(configDifference(cfg, c)).toMatch(/configuration "block" differs/);
    const m = clone();
    m.matchers.pop();
    expect(configDifference(cfg, m)).toMatch(/configuration "census" is only in one/);
  });
});

describe('hash helper', () => {
  it('fileSha256 equals node:crypto over the whole file (definition)', async () => {
    const { fileSha256 } = await import('../../src/runner/cache.js');
    const f = join(root, 'blob.bin');
    mkdirSync(root, { recursive: true });
    const bytes = Buffer.alloc(200_000, 7);
    writeFileSync(f, bytes);
    expect(await fileSha256(f)).toBe(createHash('sha256').update(bytes).digest('hex'));
  });
});
