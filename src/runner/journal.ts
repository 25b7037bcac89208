/**
 * The results journal (results.jsonl): one JobResult per line, appended as each job
 * finishes. Each line is written whole with one synchronous append, so an interrupted
 * run leaves only complete lines (and at worst one torn last line, which the reader skips).
 */
import { appendFileSync, existsSync, readFileSync, truncateSync, writeFileSync } from 'node:fs';
import { parseResultsJsonl } from '../io/results-jsonl.js';
import type { JobResult } from '../core/score.js';

export const JOURNAL_FILE = 'results.jsonl';

/** Start an empty journal (truncates an existing one). */
export function startJournal(path: string): void {
  writeFileSync(path, '');
}

/** Append one result as one line. */
export function appendResult(path: string, result: JobResult): void {
  appendFileSync(path, JSON.stringify(result) + '\n');
}

/** Parse journal text (see io/results-jsonl.ts: a torn last line is skipped). */
export const parseJournal = parseResultsJsonl;

/** Read a journal; a missing file reads as empty. */
export function readJournal(path: string): JobResult[] {
  if (!existsSync(path)) return [];
  return parseJournal(readFileSync(path, 'utf8'), path);
}

/**
 * Added for --resume: read a journal and cut away a torn last line (a write that a
 * kill interrupted), so that appends continue on a line boundary. Returns the whole
 * lines' results; a missing file becomes an empty journal.
 */
export function recoverJournal(path: string): JobResult[] {
  if (!existsSync(path)) {
    writeFileSync(path, '');
    return [];
  }
  const buf = readFileSync(path);
  const end = buf.lastIndexOf(0x0a) + 1; // just after the last newline (0 when there is none)
  if (end !== buf.length) truncateSync(path, end);
  return parseJournal(buf.subarray(0, end).toString('utf8'), path);
}
