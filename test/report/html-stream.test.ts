/**
 * index.html streamed pair by pair: the written file equals the joined pieces, the embedded
 * data parse and carry every pair, the write stays atomic, and no piece handed to the sink
 * holds more than one pair. (When the writer became a stream, its output was compared
 * byte for byte with the previous all-in-memory builder's on this run; that copy of the
 * old code is not kept in the tree.)
 */
import { readdir, readFile, rm, mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { buildHtmlReport, renderHtmlReport, writeHtmlReport } from '../../src/report/html/index.js';
import { writeRunOutputs } from '../../src/runner/outputs.js';
import { buildSyntheticRun } from '../../bench/synthetic-run.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';

let root = '';
let runDir = '';
let results: Awaited<ReturnType<typeof buildSyntheticRun>>['results'] = [];
const PAIRS = 24;

beforeAll(async () => {
  root = await mkdtemp(join(tmpdir(), 'plx-html-stream-'));
  // Enough pairs that the page crosses the writer's 64 Ki-unit gathering several times.
  ({ runDir, results } = await buildSyntheticRun({
    root,
    pairs: PAIRS,
    width: 80,
    height: 60,
    tagEven: true,
    configs: [
      { label: 'block:window=9', noise: 0.8, holes: 0.06, timeMs: 12 },
      { label: 'sgm:p2=<96>', noise: 0.3, holes: 0.02, timeMs: 40, failEvery: 5, error: 'out of </script> memory \u2028 & more' },
      { label: 'census:window=7', noise: 0.5, holes: 0.04, timeMs: 20 },
    ],
  }));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

describe('streamed HTML report', () => {
  it('writes the file the sink pieces join to, with and without stored pair thumbnails', async () => {
    const written = await readFile(await writeHtmlReport(runDir, { resamples: 200 }), 'utf8');
    expect(written.length).toBeGreaterThan(1 << 17); // several 64 Ki flushes, so the joins are exercised
    expect(await buildHtmlReport(runDir, { resamples: 200 })).toBe(written);
    // No stored pair thumbnails (left images decoded, regions rebuilt): the same page again.
    await rm(join(runDir, 'previews', '@pairs'), { recursive: true, force: true });
    expect(await buildHtmlReport(runDir, { resamples: 200 })).toBe(written);
    // The embedded data still parses as JSON (RFC 8259) and carries every pair.
    const m = /<script type="application\/json" id="plx-data">([^<]*)<\/script>/.exec(written);
    expect(m).not.toBeNull();
    const data = JSON.parse(m![1]) as { pairs: { pair: string; jobs: unknown[] }[] };
    expect(data.pairs.map((p) => p.pair)).toEqual(Array.from({ length: PAIRS }, (_, k) => `p${String(k).padStart(3, '0')}`));
    expect(data.pairs.every((p) => p.jobs.length === 3)).toBe(true);
  });

  it('hands the sink the page in pieces of at most one pair view each, pairs in order', async () => {
    const pieces: string[] = [];
    await renderHtmlReport(runDir, (c) => void pieces.push(c), { resamples: 200 });
    const perPiece = pieces.map((p) => (p.match(/\{"dataset":"dock-yard","pair":"p\d{3}"/g) ?? []).length);
    // Common practice for a streaming writer: no piece grows with the number of pairs.
    expect(Math.max(...perPiece)).toBe(1);
    expect(perPiece.reduce((a, b) => a + b, 0)).toBe(PAIRS);
    // head + one piece per pair + tail
    expect(pieces.length).toBe(PAIRS + 2);
    expect(pieces[0].startsWith('<!doctype html>')).toBe(true);
    expect(pieces[pieces.length - 1].endsWith('</html>\n')).toBe(true);
  });

  it('gives the same page from the results in hand as from results.jsonl (writeRunOutputs passes them)', async () => {
    const fromFile = await buildHtmlReport(runDir);
    const thresholds = (JSON.parse(await readFile(join(runDir, 'run.json'), 'utf8')) as { config: { thresholds: number[] } }).config.thresholds;
    const journal = (await readFile(join(runDir, 'results.jsonl'), 'utf8')).trim().split('\n').map((l) => JSON.parse(l) as (typeof results)[number]);
    const out = await writeRunOutputs(runDir, journal, { thresholds, quantiles: DEFAULT_QUANTILES });
    expect(out.files).toContain('index.html');
    expect(await readFile(join(runDir, 'index.html'), 'utf8')).toBe(fromFile);
  });

  it('is atomic: a failed render leaves the old page and no temporary file', async () => {
    const before = await readFile(await writeHtmlReport(runDir, { resamples: 200 }), 'utf8');
    const info = await readFile(join(runDir, 'run.json'), 'utf8');
    try {
      // A run.json that is not a run record: the render fails before or while writing.
      await writeFile(join(runDir, 'run.json'), '{"config":{}}');
      await expect(writeHtmlReport(runDir, { results })).rejects.toBeInstanceOf(InputError);
      await expect(writeHtmlReport(runDir, { results })).rejects.toThrow(/run\.json: was written by an older parallax/);
    } finally {
      await writeFile(join(runDir, 'run.json'), info);
    }
    expect(await readFile(join(runDir, 'index.html'), 'utf8')).toBe(before);
    expect((await readdir(runDir)).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });

  it('names index.html when the run folder cannot take the page', async () => {
    // A run folder path that is a file's: open(tmp) fails (ENOTDIR); the one-line error names index.html.
    const notDir = join(root, 'plain-file');
    await writeFile(notDir, 'x');
    await expect(writeHtmlReport(notDir, { results })).rejects.toThrow(/plain-file\/index\.html/);
    await expect(writeHtmlReport(notDir, { results })).rejects.toBeInstanceOf(InputError);
  });
});
