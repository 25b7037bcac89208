/**
 * The tables and the report of a run folder, written from the journal alone (a pure
 * function of results.jsonl plus the thresholds), so a resumed, sharded or merged
 * run writes the same files. Every file is written atomically.
 */
import { join } from 'node:path';
import type { JobResult } from '../core/score.js';
import { writeFileAtomic } from '../io/files.js';
import { pairsCsvText } from '../report/pairs-csv.js';
import { summaryCsvText } from '../report/summary-csv.js';
import { aggregate, latestJobs, type SummaryRow } from '../stats/aggregate.js';
import { optionalModule } from './optional.js';

export const PAIRS_CSV = 'pairs.csv';
export const SUMMARY_CSV = 'summary.csv';
export const REPORT_HTML = 'index.html';

type HtmlModule = { writeHtmlReport(runDir: string): Promise<unknown> };

export interface WrittenOutputs {
  files: string[];
  summary: SummaryRow[];
}

/** Write pairs.csv, summary.csv and index.html (when the HTML writer is part of this build). */
export async function writeRunOutputs(runDir: string, results: readonly JobResult[], thresholds: readonly number[]): Promise<WrittenOutputs> {
  const jobs = latestJobs(results);
  const th = [...thresholds];
  const files: string[] = [];
  await writeFileAtomic(join(runDir, PAIRS_CSV), pairsCsvText(jobs, th));
  files.push(PAIRS_CSV);
  const summary = aggregate(jobs, { thresholds: th });
  await writeFileAtomic(join(runDir, SUMMARY_CSV), summaryCsvText(summary, th));
  files.push(SUMMARY_CSV);
  const html = await optionalModule<HtmlModule>('../report/html.js');
  if (html) {
    await html.writeHtmlReport(runDir);
    files.push(REPORT_HTML);
  }
  return { files, summary };
}
