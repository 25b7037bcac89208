/**
 * Reading a run folder for reports and comparisons: run.json (provenance) and
 * results.jsonl (one JobResult per line; a torn last line is skipped).
 */
import { parseResultsJsonl } from '../io/results-jsonl.js';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { InputError } from '../core/errors.js';
import type { JobResult } from '../core/score.js';

export const RUN_JSON = 'run.json';
export const RESULTS_JSONL = 'results.jsonl';

/** The parts of run.json that reports and comparisons read (the runner writes more). */
export interface RunInfoView {
  name?: string;
  status?: string;
  started?: string;
  ended?: string | null;
  tool?: { name?: string; version?: string; git?: { commit: string; dirty: boolean } | null };
  config: {
    thresholds: number[];
    regions: Record<string, number>;
    matchers?: { label: string; matcherId?: string; kind?: string; version?: string; params?: Record<string, unknown>; codeHash?: string }[];
    datasets: { name: string; path?: string; manifest?: string; hash: string; pairs?: number }[];
  };
  jobs?: { total: number; ok: number; failed: number };
  environment?: { node?: string; cpu?: { model?: string; count?: number }; os?: { platform?: string; release?: string; arch?: string }; memoryMb?: number };
  notes?: Record<string, string>;
}

export interface RunFolder {
  dir: string;
  info: RunInfoView;
  results: JobResult[];
}

async function readText(path: string, what: string): Promise<string> {
  try {
    return await readFile(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputError(path, code === 'ENOENT' ? `missing (${what})` : `cannot be read (${code ?? String(e)})`);
  }
}

export function parseRunInfo(text: string, file: string): RunInfoView {
  let j: unknown;
  try {
    j = JSON.parse(text);
  } catch {
    throw new InputError(file, 'is not valid JSON');
  }
  const c = (j as { config?: RunInfoView['config'] })?.config;
  if (!c || !Array.isArray(c.thresholds) || typeof c.regions !== 'object' || c.regions === null || !Array.isArray(c.datasets)) {
    throw new InputError(file, 'is not a parallax run record (config.thresholds, config.regions, config.datasets expected)');
  }
  return j as RunInfoView;
}

/** results.jsonl of a run folder (a torn last line is skipped). */
export const parseResults = parseResultsJsonl;

export async function readRunFolder(dir: string): Promise<RunFolder> {
  const infoPath = join(dir, RUN_JSON);
  const resPath = join(dir, RESULTS_JSONL);
  const info = parseRunInfo(await readText(infoPath, 'is this a run folder?'), infoPath);
  const results = parseResults(await readText(resPath, 'the run has no results yet'), resPath);
  return { dir, info, results };
}
