/**
 * The results journal format (results.jsonl): one JobResult as JSON per line. Shared by
 * the runner (which appends and resumes it) and the report (which reads finished runs).
 */
import { InputError } from '../core/errors.js';
import type { JobResult } from '../core/score.js';

/**
 * Parse journal text. A malformed line in the middle is an InputError naming the file
 * and the line; a torn last line (no newline at the end: a write an interruption cut
 * short) is skipped.
 */
export function parseResultsJsonl(text: string, file: string): JobResult[] {
  const lines = text.split('\n');
  const torn = lines.length > 0 && lines[lines.length - 1] !== '';
  const out: JobResult[] = [];
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i];
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
