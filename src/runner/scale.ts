/**
 * Options that make a run scale out and survive interruptions (all optional; a plan
 * without them runs sequentially in the main thread, as before):
 *   jobs     worker threads matching in parallel (1 = in the main thread)
 *   threads  thread budget shared by the pool and matchers that split work
 *            (MatchInput.threads = max(1, floor(threads / jobs)))
 *   resume   keep results.jsonl and run only the jobs it does not hold
 *   cache    content-addressed cache of matcher outputs (see cache.ts)
 *   shard    run only shard k of N (see shard.ts)
 */
import type { Shard } from './shard.js';

export interface ScaleOptions {
  readonly jobs?: number;
  readonly threads?: number;
  readonly resume?: boolean;
  readonly cache?: { readonly dir: string; readonly maxMb?: number } | null;
  readonly shard?: Shard;
}

/** Threads each concurrent job may use: the budget split evenly, at least one. */
export function threadsPerJob(budget: number, concurrentJobs: number): number {
  return Math.max(1, Math.floor(budget / Math.max(1, concurrentJobs)));
}
