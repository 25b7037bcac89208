/**
 * The results journal (results.jsonl): one JobResult per line, appended as each job
 * finishes. Each line is written whole with one synchronous append, so an interrupted
 * run leaves only complete lines (and at worst one torn last line, which the reader skips).
 */
import { appendFileSync, existsSync, readFileSync, truncateSync, writeFileSync } from 'node:fs';
import { InputError } from '../core/errors.js';
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

/**
 * Parse journal text. A malformed line in the middle is an InputError naming the file
 * and the line; a torn last line (no newline at the end) is skipped.
 */
export function parseJournal(text: string, file: string): JobResult[] {
  const lines = text.split('\n');
  const torn = lines.length > 0 && lines[lines.length - 1] !== '';
  const out: JobResult[] = [];
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i]!;
    if (line.trim() === '') continue;
    try {
      out.push(JSON.parse(line) as JobResult);
    } catch {
      if (torn && i === lines.length - 1) break;
      throw new InputError(file, `line ${i + 1} is not valid JSON`);
    }
  }
  return out;
}

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
