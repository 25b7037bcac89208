/**
 * Shards: `--shard k/N` (k is 1-based) runs a deterministic share of a run's jobs.
 * The sorted pairs of all datasets (dataset name, then pair id: the order of
 * jobs.ts) are dealt round-robin: pair number i (0-based) goes to shard (i mod N) + 1.
 * All configurations of a pair stay in one shard (the pair is decoded once), the
 * shares differ by at most one pair, and the split depends only on the job list.
 * With `unitOf`, pairs that share a unit (the frames of one sequence, so that each frame
 * meets its predecessor for flicker) are dealt together, as one unit in the order of its
 * first pair.
 */
import { UsageError } from '../core/errors.js';
import { groupByPair, type JobKey } from './jobs.js';

export interface Shard {
  /** 1-based shard number. */
  readonly index: number;
  readonly count: number;
}

/** Parse `k/N` with 1 <= k <= N (the --shard option). */
export function parseShard(text: string, option = '--shard'): Shard {
  const m = /^\s*(\d{1,6})\s*\/\s*(\d{1,6})\s*$/.exec(text);
  if (!m) throw new UsageError(option, `"${text}" is not of the form k/N (e.g. 2/5)`);
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (count < 1) throw new UsageError(option, `the shard count must be at least 1, got ${count}`);
  if (index < 1 || index > count) throw new UsageError(option, `shard ${index} is not in 1..${count}`);
  return { index, count };
}

/** `k/N` text of a shard. */
export function shardText(s: Shard): string {
  return `${s.index}/${s.count}`;
}

/** The jobs of one shard, in the original (sorted) order. */
export function shardJobs(jobs: readonly JobKey[], shard: Shard, unitOf?: (dataset: string, pair: string) => string | undefined): JobKey[] {
  const out: JobKey[] = [];
  const units = new Map<string, number>();
  groupByPair(jobs).forEach((group, i) => {
    const named = unitOf?.(group[0].dataset, group[0].pair);
    const key = named === undefined ? `pair\u0000${i}` : `unit\u0000${named}`;
    if (!units.has(key)) units.set(key, units.size);
    if (units.get(key)! % shard.count === shard.index - 1) out.push(...group);
  });
  return out;
}
