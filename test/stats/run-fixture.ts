/** Writes a run folder (run.json through the runner's own writer, results.jsonl) for compare and report tests. */
import { mkdir, writeFile } from 'node:fs/promises';
import { RUN_RECORD_FORMAT, writeRunRecord, type RunRecord } from '../../src/io/run-record.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';
import { join } from 'node:path';
import type { JobResult } from '../../src/core/score.js';
import { DEFAULT_REGION_PARAMS } from '../../src/core/regions.js';

export interface RunFixture {
  name: string;
  thresholds: number[];
  quantiles?: number[];
  results: JobResult[];
  datasets?: { name: string; hash: string; manifest?: string; path?: string; pairs?: number }[];
  regions?: Record<string, number>;
}

export async function writeRunFolder(dir: string, f: RunFixture): Promise<string> {
  await mkdir(dir, { recursive: true });
  const labels = [...new Set(f.results.map((r) => r.matcher))];
  const info: RunRecord = {
    format: RUN_RECORD_FORMAT,
    tool: { name: 'parallax', version: '0.1.0', git: null },
    name: f.name,
    status: 'complete',
    started: '2026-01-05T08:00:00.000Z',
    ended: '2026-01-05T08:01:00.000Z',
    config: {
      thresholds: f.thresholds,
      quantiles: f.quantiles ?? [...DEFAULT_QUANTILES],
      regions: f.regions ?? { ...DEFAULT_REGION_PARAMS },
      matchers: labels.map((l) => ({ label: l, matcherId: l.split(':')[0], kind: 'matcher' as const, version: '1', params: {} })),
      datasets: (f.datasets ?? [{ name: 'dock', hash: 'a'.repeat(64) }]).map((d) => ({ path: '/nowhere', manifest: '/nowhere/dataset.json', pairs: 12, ...d })),
    },
    jobs: { total: f.results.length, ok: f.results.filter((r) => r.status === 'ok').length, failed: f.results.filter((r) => r.status === 'failed').length },
    environment: { node: process.version, cpu: { model: 'test', count: 2 }, os: { platform: 'linux', release: '', arch: 'x64' }, memoryMb: 1 },
    notes: {},
  };
  await writeRunRecord(dir, info);
  await writeFile(join(dir, 'results.jsonl'), f.results.map((r) => JSON.stringify(r)).join('\n') + '\n');
  return dir;
}
