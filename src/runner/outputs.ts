/**
 * The tables and the report of a run folder, written from the journal alone (a pure
 * function of results.jsonl plus the metric set), so a resumed, sharded or merged
 * run writes the same files. Every file is written atomically.
 */
import { join } from 'node:path';
import type { JobResult } from '../core/score.js';
import { writeFileAtomic } from '../io/files.js';
import { writeHtmlReport } from '../report/html/index.js';
import { pairsCsvText } from '../report/pairs-csv.js';
import { summaryCsvText } from '../report/summary-csv.js';
import { aggregate, latestJobs, type SummaryRow } from '../stats/aggregate.js';
import type { MetricSet } from '../metrics/catalogue.js';
import { breakingPoints, defaultBreakingRule, parseBreakingRule, type BreakingPoint } from '../stats/breaking.js';
import { breakingCsvText } from '../report/breaking-csv.js';
import { CLEAN, conditionOf } from '../conditions/spec.js';

export const PAIRS_CSV = 'pairs.csv';
export const SUMMARY_CSV = 'summary.csv';
export const REPORT_HTML = 'index.html';
export const BREAKING_CSV = 'breaking.csv';

export interface WrittenOutputs {
  files: string[];
  summary: SummaryRow[];
  /** Breaking points per configuration, dataset and condition kind (runs with conditions). */
  breaking: BreakingPoint[];
}

/**
 * Write pairs.csv, summary.csv, breaking.csv (runs with conditions) and index.html (the report reads run.json: write it first).
 * `results` must be the run folder's results.jsonl as it stands (the report takes them
 * instead of reading the file again).
 */
export async function writeRunOutputs(runDir: string, results: readonly JobResult[], set: MetricSet): Promise<WrittenOutputs> {
  const jobs = latestJobs(results);
  const metricSet: MetricSet = {
    thresholds: [...set.thresholds],
    quantiles: [...set.quantiles],
    ...(set.usableRange !== undefined ? { usableRange: set.usableRange } : {}),
    ...(set.breakingPoint !== undefined ? { breakingPoint: set.breakingPoint } : {}),
  };
  const files: string[] = [];
  await writeFileAtomic(join(runDir, PAIRS_CSV), pairsCsvText(jobs, metricSet));
  files.push(PAIRS_CSV);
  const summary = aggregate(jobs, metricSet);
  await writeFileAtomic(join(runDir, SUMMARY_CSV), summaryCsvText(summary, metricSet));
  files.push(SUMMARY_CSV);
  const breaking = jobs.some((j) => conditionOf(j) !== CLEAN) ? breakingPoints(jobs, metricSet, parseBreakingRule(metricSet.breakingPoint ?? defaultBreakingRule(metricSet), metricSet, 'breakingPoint')) : [];
  if (breaking.length) {
    await writeFileAtomic(join(runDir, BREAKING_CSV), breakingCsvText(breaking));
    files.push(BREAKING_CSV);
  }
  // The report streams index.html pair by pair, from the results in hand (not a second
  // copy read from results.jsonl: `results` is that file's content, as read by the caller).
  await writeHtmlReport(runDir, { results });
  files.push(REPORT_HTML);
  return { files, summary, breaking };
}
