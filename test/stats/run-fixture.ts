/** Writes a run folder (run.json + results.jsonl) by hand for compare and report tests. */
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { JobResult } from '../../src/core/score.js';
import { DEFAULT_REGION_PARAMS } from '../../src/core/regions.js';

export interface RunFixture {
  name: string;
  thresholds: number[];
  results: JobResult[];
  datasets?: { name: string; hash: string; manifest?: string; path?: string; pairs?: number }[];
  regions?: Record<string, number>;
}

export async function writeRunFolder(dir: string, f: RunFixture): Promise<string> {
  await mkdir(dir, { recursive: true });
  const labels = [...new Set(f.results.map((r) => r.matcher))];
  const info = {
    tool: { name: 'parallax', version: '0.1.0', git: null },
    name: f.name,
    status: 'complete',
    started: '2026-01-05T08:00:00.000Z',
    ended: '2026-01-05T08:01:00.000Z',
    config: {
      thresholds: f.thresholds,
      regions: f.regions ?? { ...DEFAULT_REGION_PARAMS },
      matchers: labels.map((l) => ({ label: l, matcherId: l.split(':')[0], kind: 'matcher', version: '1', params: {} })),
      datasets: f.datasets ?? [{ name: 'dock', path: '/nowhere', manifest: '/nowhere/dataset.json', hash: 'a'.repeat(64), pairs: 12 }],
    },
    jobs: { total: f.results.length, ok: f.results.filter((r) => r.status === 'ok').length, failed: f.results.filter((r) => r.status === 'failed').length },
    environment: { node: process.version, cpu: { model: 'test', count: 2 }, os: { platform: 'linux', release: '', arch: 'x64' }, memoryMb: 1 },
  };
  await writeFile(join(dir, 'run.json'), JSON.stringify(info, null, 2));
  await writeFile(join(dir, 'results.jsonl'), f.results.map((r) => JSON.stringify(r)).join('\n') + '\n');
  return dir;
}
