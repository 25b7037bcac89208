/**
 * Running a plan from the command line: Ctrl-C handling, the progress bar (only when
 * stderr is a terminal and not --quiet), the final table and the exit code.
 * A pair that cannot be loaded prints one line naming the file as it happens (also
 * under --quiet); the run goes on and the command exits 2 at the end.
 */
import { configLabel } from '../conditions/spec.js';
import { relative } from 'node:path';
import cliProgress from 'cli-progress';
import { AbortedError } from '../core/errors.js';
import { breakingTable, consoleTable } from '../report/console-table.js';
import type { RunPlan } from '../runner/plan.js';
import { executeRun, type RunOutcome } from '../runner/run.js';
import { aggregate } from '../stats/aggregate.js';

export interface SessionOptions {
  quiet: boolean;
  /** Print the summary as JSON to stdout (and nothing else there). */
  json: boolean;
}

/** A path for messages: relative to the working folder when inside it. */
export function shownPath(p: string): string {
  const r = relative(process.cwd(), p);
  return r && !r.startsWith('..') ? r : p;
}

/** Exit code of a run that finished with at least one failed job (tables and report written). */
export const EXIT_JOBS_FAILED = 3;

export async function runSession(plan: RunPlan, opts: SessionOptions): Promise<RunOutcome> {
  const ac = new AbortController();
  const onSigint = (): void => {
    if (ac.signal.aborted) process.exit(130);
    process.stderr.write('\nparallax: stopping; jobs in flight are cancelled, finished ones kept (Ctrl-C again to quit at once)\n');
    ac.abort();
  };
  process.on('SIGINT', onSigint);
  for (const w of plan.warnings ?? []) process.stderr.write(`parallax: warning: ${w}\n`);
  const showBar = !opts.quiet && process.stderr.isTTY === true;
  const bar = showBar
    ? new cliProgress.SingleBar(
        { stream: process.stderr, format: 'matching {bar} {value}/{total} jobs | {job}', hideCursor: true, clearOnComplete: true },
        cliProgress.Presets.shades_classic,
      )
    : undefined;
  let outcome: RunOutcome;
  const broken = new Set<string>();
  const say = (line: string): void => {
    if (bar) bar.stop();
    process.stderr.write(line);
  };
  let done = 0;
  try {
    outcome = await executeRun(plan, {
      signal: ac.signal,
      onStart: (total) => bar?.start(total, 0, { job: '' }),
      onPairError: (dataset, pair, message) => {
        broken.add(`${dataset}\n${pair}`);
        say(`parallax: ${message}\n`);
        if (bar) bar.start(plan.jobs.length, done, { job: '' });
      },
      onJob: (r, n) => {
        done = n;
        bar?.update(n, { job: `${configLabel(r)} ${r.dataset}/${r.pair}` });
        // A broken pair's jobs were announced once by onPairError.
        if (r.status === 'failed' && !opts.quiet && !broken.has(`${r.dataset}\n${r.pair}`)) {
          say(`parallax: ${configLabel(r)} failed on ${r.dataset}/${r.pair}: ${r.error ?? 'no output'}\n`);
          if (bar) bar.start(plan.jobs.length, n, { job: '' });
        }
      },
    });
  } finally {
    bar?.stop();
    process.off('SIGINT', onSigint);
  }
  const summary = outcome.outputs.summary;
  if (opts.json) {
    process.stdout.write(
      JSON.stringify({ runDir: outcome.runDir, status: outcome.info.status, jobs: outcome.info.jobs, broken_pairs: outcome.brokenPairs, files: outcome.outputs.files, summary }, null, 2) + '\n',
    );
  } else if (!opts.quiet) {
    const rows = summary.length ? summary : aggregate(outcome.results, { thresholds: plan.thresholds, quantiles: plan.quantiles, ci: false });
    process.stdout.write('\n' + consoleTable(rows, plan.thresholds) + breakingTable(outcome.outputs.breaking));
    const { ok, failed } = outcome.info.jobs;
    process.stdout.write(
      `\n${ok + failed} job(s), ${failed} failed. Wrote ${['run.json', 'results.jsonl', ...outcome.outputs.files].join(', ')} to ${shownPath(outcome.runDir)}/\n`,
    );
  }
  if (outcome.aborted) throw new AbortedError(`run stopped; partial results in ${shownPath(outcome.runDir)}/`);
  if (outcome.brokenPairs.length) {
    // Everything else was computed and written; the exit code says the input was not all usable.
    if (!opts.quiet) {
      const n = outcome.brokenPairs.length;
      process.stderr.write(`parallax: ${n} pair(s) could not be loaded (see above); their jobs are recorded as failed\n`);
    }
    process.exitCode = 2;
  } else if (outcome.info.jobs.failed > 0) {
    // The tables and the report are written; the code tells a pipeline that not every job gave an answer.
    if (!opts.quiet) process.stderr.write(`parallax: ${outcome.info.jobs.failed} of ${outcome.info.jobs.ok + outcome.info.jobs.failed} job(s) failed (exit ${EXIT_JOBS_FAILED})\n`);
    process.exitCode = EXIT_JOBS_FAILED;
  }
  return outcome;
}
