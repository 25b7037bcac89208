/**
 * Execution of a planned run: for each dataset and pair in sorted order, load the pair
 * once, build its regions once, then run every configuration on it; each result is
 * appended to results.jsonl as soon as it is scored. (scheduler.ts does the loop, in
 * the main thread or on a worker pool; plan.scale adds resume, shards and the cache.) run.json is written at the start
 * and rewritten at the end; the tables are written from the journal at the end.
 */
import { changesSize, conditionOf, configLabel } from '../conditions/spec.js';
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { AbortedError, InputError } from '../core/errors.js';
import type { JobResult } from '../core/score.js';
import { jobKeyString, type JobKey } from './jobs.js';
import { appendResult, JOURNAL_FILE, readJournal, recoverJournal, startJournal } from './journal.js';
import { pruneCache } from './cache.js';
import { watchInterrupts } from './interrupt.js';
import { runScheduled, type ScheduleStats } from './scheduler.js';
import { shardJobs, shardText } from './shard.js';
import { framePlaces } from './sequence.js';
import { latestJobs } from '../stats/aggregate.js';
import { writePreview } from '../report/preview.js';
import { writeRunOutputs, type WrittenOutputs } from './outputs.js';
import type { RunPlan } from './plan.js';
import { runRecord } from './provenance.js';
import { writeRunRecord, type BrokenPair, type RunRecord } from '../io/run-record.js';

export interface RunHooks {
  signal?: AbortSignal;
  /** Called once before the first job. */
  onStart?(total: number): void;
  /** Called after each job's result is in the journal. */
  onJob?(result: JobResult, done: number, total: number): void;
  /** Called when a pair cannot be loaded (one line naming the file), before its failed jobs reach onJob. */
  onPairError?(dataset: string, pair: string, message: string): void;
}

export type { BrokenPair } from '../io/run-record.js';

export interface RunOutcome {
  runDir: string;
  results: JobResult[];
  outputs: WrittenOutputs;
  info: RunRecord;
  aborted: boolean;
  /** Pairs that could not be loaded (their jobs are in the results as failed). The CLI exits 2 when any. */
  brokenPairs: BrokenPair[];
}

export { pairRegions } from '../dataset/regions.js';

const resultKey = (r: JobResult): string => jobKeyString({ dataset: r.dataset, pair: r.pair, label: r.matcher, condition: conditionOf(r) });

/** Shard units of framed pairs: their dataset and group (a sequence stays in one shard). */
function sequenceUnits(plan: RunPlan): (dataset: string, pair: string) => string | undefined {
  const placeOf = framePlaces(plan.datasets.map((d) => d.manifest));
  return (dataset, pair) => {
    const place = placeOf(dataset, pair);
    return place && `${dataset}\u0000${place.group}`;
  };
}

/**
 * The run record at the start, and the jobs left to run: this shard's jobs less those a
 * resumed journal already holds (counted in the record as done).
 */
function startRecord(plan: RunPlan, journal: string): { info: RunRecord; todo: JobKey[] } {
  const info = runRecord(plan, new Date());
  const scale = plan.scale;
  const prior = scale?.resume ? recoverJournal(journal) : [];
  const mine = scale?.shard ? shardJobs(plan.jobs, scale.shard, sequenceUnits(plan)) : plan.jobs;
  const mineKeys = new Set(mine.map(jobKeyString));
  const finished = latestJobs(prior).filter((r) => mineKeys.has(resultKey(r)));
  const doneKeys = new Set(finished.map(resultKey));
  info.jobs.total = mine.length;
  for (const r of finished) {
    if (r.status === 'ok') info.jobs.ok++;
    else info.jobs.failed++;
  }
  if (plan.settings) info.rerun = { settings: plan.settings, shard: scale?.shard ? shardText(scale.shard) : null };
  if (scale) info.cache = scale.cache ? { dir: scale.cache.dir, jobs_from_cache: 0, jobs_computed: 0 } : null;
  return { info, todo: mine.filter((k) => !doneKeys.has(jobKeyString(k))) };
}

/** The record's end: status, broken pairs, time, cache counts. */
function endRecord(info: RunRecord, aborted: boolean, brokenPairs: BrokenPair[], stats: ScheduleStats): void {
  info.status = aborted ? 'aborted' : 'complete';
  if (brokenPairs.length) info.broken_pairs = brokenPairs;
  info.ended = new Date().toISOString();
  if (info.cache) {
    info.cache.jobs_from_cache = stats.cached;
    info.cache.jobs_computed = stats.computed;
    if (stats.cacheWriteErrors) info.cache.write_errors = stats.cacheWriteErrors;
  }
}

async function disposeMatchers(plan: RunPlan): Promise<void> {
  for (const c of plan.configs) {
    if (c.kind === 'matcher' && c.plugin.dispose) {
      try {
        await c.plugin.dispose();
      } catch {
        /* a failing dispose must not hide the run's outcome */
      }
    }
  }
}

/**
 * Run every job of the plan. A pair that cannot be loaded does not end the run: its
 * jobs are recorded as failed (see broken-pair.ts) and listed in `brokenPairs`.
 */
export async function executeRun(plan: RunPlan, hooks: RunHooks = {}): Promise<RunOutcome> {
  try {
    mkdirSync(plan.runDir, { recursive: true });
  } catch (e) {
    throw new InputError(plan.runDir, `cannot create the run folder (${(e as NodeJS.ErrnoException).code ?? 'error'})`);
  }
  // Scaled runs (plan.scale, see scale.ts) also stop on SIGTERM; resume, shard and cache.
  const watch = plan.scale ? watchInterrupts(hooks.signal) : undefined;
  const signal = watch?.signal ?? hooks.signal ?? new AbortController().signal;
  const journal = join(plan.runDir, JOURNAL_FILE);
  const scale = plan.scale;
  const { info, todo } = startRecord(plan, journal);
  const stats: ScheduleStats = { cached: 0, computed: 0 };
  await writeRunRecord(plan.runDir, info);
  if (!scale?.resume) startJournal(journal);

  const total = todo.length;
  hooks.onStart?.(total);
  let done = 0;
  let aborted = false;
  const brokenPairs: BrokenPair[] = [];
  try {
    await runScheduled({
      plan,
      jobs: todo,
      signal,
      stats,
      onPairError: (dataset, pair, message) => {
        brokenPairs.push({ dataset, pair, error: message });
        hooks.onPairError?.(dataset, pair, message);
      },
      onResult: async (result, disparity, cfg, pair) => {
        appendResult(journal, result);
        if (result.status === 'ok') info.jobs.ok++;
        else info.jobs.failed++;
        done++;
        // A lower resolution's map does not fit the pair's thumbnails: the report shows it in the tables only.
        if (disparity && !changesSize(conditionOf(result))) {
          await writePreview(plan.runDir, configLabel(result), pair.dataset, pair.id, { width: pair.width, height: pair.height, data: disparity });
        }
        hooks.onJob?.(result, done, total);
      },
    });
  } catch (e) {
    if (!(e instanceof AbortedError)) {
      watch?.dispose();
      info.status = 'aborted';
      info.ended = new Date().toISOString();
      await writeRunRecord(plan.runDir, info);
      throw e;
    }
    aborted = true;
  } finally {
    await disposeMatchers(plan);
  }
  const terminated = watch?.received() === 'SIGTERM';
  watch?.dispose();
  endRecord(info, aborted, brokenPairs, stats);
  if (info.cache && scale?.cache?.maxMb !== undefined) {
    try {
      pruneCache(scale.cache.dir, scale.cache.maxMb * 2 ** 20);
    } catch {
      /* an unreadable cache folder must not fail a finished run */
    }
  }
  await writeRunRecord(plan.runDir, info);
  // Tables and report from the journal alone (and run.json, for the report).
  const results = readJournal(journal);
  const outputs = await writeRunOutputs(plan.runDir, results, plan);
  if (aborted && scale) {
    // Exit 143 (128 + SIGTERM's 15) after SIGTERM, 130 (128 + SIGINT's 2) after Ctrl-C.
    throw new AbortedError(
      `run stopped after ${info.jobs.ok + info.jobs.failed} of ${info.jobs.total} jobs (partial tables written); resume with: parallax run --resume ${plan.runDir}`,
      terminated ? 143 : 130,
    );
  }
  return { runDir: plan.runDir, results, outputs, info, aborted, brokenPairs };
}

