/**
 * Joining shard runs (or any runs of one configuration) into one run folder.
 *
 * Checks: every run's configuration agrees with the first one's (thresholds, region
 * parameters, configurations with parameters and code hashes, datasets by content
 * hash; see resume.ts configFingerprint), and shard runs name the same shard count.
 * Journals: the latest result of each job (dataset/pair/label) of every run is taken;
 * a job present in several runs is kept once when the copies agree (same status,
 * error, parameters, thresholds and scores; time_ms, wall_ms, peak_mb and `cached` may differ)
 * and refused (InputError naming both runs) when they do not.
 * Output: results.jsonl in sorted job order, run.json (status `complete` when every
 * job of the configuration is there, else `aborted`, so `parallax run --resume <out>`
 * can finish it), the previews of every run, pairs.csv, summary.csv and index.html,
 * written from the journal exactly as a single run writes them.
 */
import { conditionOf } from '../conditions/spec.js';
import { cpSync, existsSync, mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { InputError, UsageError } from '../core/errors.js';
import type { JobResult } from '../core/score.js';
import { writeFileAtomic } from '../io/files.js';
import { latestJobs } from '../stats/aggregate.js';
import { compareJobKeys, jobKeyString, type JobKey } from './jobs.js';
import { JOURNAL_FILE, readJournal } from './journal.js';
import { writeRunOutputs, type WrittenOutputs } from './outputs.js';
import { metricSetOf, readRunRecord, RUN_RECORD_FILE, writeRunRecord, type RunRecord } from '../io/run-record.js';
import { configDifference } from './resume.js';
import { parseShard } from './shard.js';

export interface MergeOutcome {
  runDir: string;
  info: RunRecord;
  results: JobResult[];
  outputs: WrittenOutputs;
  /** Jobs found in more than one run (identical copies, kept once). */
  duplicates: number;
  /** Jobs of the configuration that no run holds. */
  missing: number;
}

function keyOf(r: JobResult): JobKey {
  return { dataset: r.dataset, pair: r.pair, label: r.matcher, condition: conditionOf(r) };
}

/** The parts of a result that must agree between two copies of one job. */
function outcomeText(r: JobResult): string {
  return JSON.stringify([r.status, r.error ?? null, r.matcherId, r.params, r.thresholds, r.quantiles, r.scores]);
}

export async function mergeRuns(dirsIn: readonly string[], outIn: string): Promise<MergeOutcome> {
  if (dirsIn.length < 1) throw new UsageError('merge', 'give at least one run folder');
  const dirs = dirsIn.map((d) => resolve(d));
  const out = resolve(outIn);
  if (dirs.includes(out)) throw new UsageError('--out', `${out} is one of the runs being merged; choose another folder`);
  const infos = dirs.map((d) => readRunRecord(d));
  const base = infos[0];
  let shardCount: number | undefined;
  infos.forEach((info, i) => {
    const file = join(dirs[i], RUN_RECORD_FILE);
    const diff = configDifference(base.config, info.config);
    if (diff) throw new InputError(file, `cannot be merged with ${dirs[0]}: ${diff}`);
    const s = info.rerun?.shard;
    if (s) {
      const { count } = parseShard(s, `${file}: shard`);
      if (shardCount !== undefined && count !== shardCount) throw new InputError(file, `is shard ${s}, but another run was cut into ${shardCount} shards`);
      shardCount = count;
    }
  });

  const byKey = new Map<string, { r: JobResult; dir: string }>();
  let duplicates = 0;
  dirs.forEach((dir) => {
    const journal = join(dir, JOURNAL_FILE);
    for (const r of latestJobs(readJournal(journal))) {
      const k = jobKeyString(keyOf(r));
      const prev = byKey.get(k);
      if (!prev) {
        byKey.set(k, { r, dir });
        continue;
      }
      if (outcomeText(prev.r) !== outcomeText(r)) {
        throw new InputError(journal, `job ${k} differs from the same job in ${prev.dir}; refusing to pick one`);
      }
      duplicates++;
    }
  });
  const results = [...byKey.values()].map((v) => v.r).sort((a, b) => compareJobKeys(keyOf(a), keyOf(b)));
  const expected = base.config.datasets.reduce((n, d) => n + d.pairs, 0) * base.config.matchers.length;
  const missing = Math.max(0, expected - results.length);

  mkdirSync(out, { recursive: true });
  for (const dir of dirs) {
    const prev = join(dir, 'previews');
    if (existsSync(prev)) cpSync(prev, join(out, 'previews'), { recursive: true, force: true });
  }
  await writeFileAtomic(join(out, JOURNAL_FILE), results.map((r) => JSON.stringify(r) + '\n').join(''));
  const times = (pick: (i: RunRecord) => string | null): string[] => infos.map(pick).filter((t): t is string => typeof t === 'string').sort();
  const started = times((i) => i.started);
  const ended = times((i) => i.ended);
  const ok = results.filter((r) => r.status === 'ok').length;
  const info: RunRecord = {
    ...base,
    status: missing === 0 ? 'complete' : 'aborted',
    started: started[0] ?? base.started,
    ended: ended[ended.length - 1] ?? null,
    jobs: { total: expected, ok, failed: results.length - ok },
    ...(base.rerun ? { rerun: { settings: { ...base.rerun.settings, out }, shard: null } } : {}),
    cache: null,
    merged: { from: dirs, shards: infos.map((i) => i.rerun?.shard ?? null) },
  };
  await writeRunRecord(out, info);
  const outputs = await writeRunOutputs(out, results, metricSetOf(base));
  return { runDir: out, info, results, outputs, duplicates, missing };
}
