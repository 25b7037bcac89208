/**
 * Reading a run folder for reports and comparisons: run.json (the run record, read
 * through src/io/run-record.ts) and results.jsonl (one JobResult per line; a torn
 * last line is skipped).
 */
import { parseResultsJsonl } from '../io/results-jsonl.js';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { InputError } from '../core/errors.js';
import type { JobResult } from '../core/score.js';
import { parseRunRecord, RUN_RECORD_FILE, type RunRecord } from '../io/run-record.js';

export const RESULTS_JSONL = 'results.jsonl';

export interface RunFolder {
  dir: string;
  info: RunRecord;
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

/** The run record of a run folder. */
export async function readRunRecordAsync(dir: string): Promise<RunRecord> {
  const infoPath = join(dir, RUN_RECORD_FILE);
  return parseRunRecord(await readText(infoPath, 'is this a run folder?'), infoPath);
}

export async function readRunFolder(dir: string): Promise<RunFolder> {
  const info = await readRunRecordAsync(dir);
  const resPath = join(dir, RESULTS_JSONL);
  const results = parseResultsJsonl(await readText(resPath, 'the run has no results yet'), resPath);
  return { dir, info, results };
}
