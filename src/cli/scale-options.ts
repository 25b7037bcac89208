/**
 * The `parallax run` options that make runs scale out and survive:
 *   --jobs N          worker threads (default: the machine's cores)
 *   --threads N       thread budget shared by the pool and matchers (default: the cores)
 *   --resume <dir>    finish an interrupted run
 *   --cache-dir, --no-cache, --cache-max-mb   result cache (see runner/cache.ts)
 *   --shard k/N       run one shard of the jobs (see runner/shard.ts)
 */
import { availableParallelism } from 'node:os';
import { resolve } from 'node:path';
import type { Argv } from 'yargs';
import { UsageError } from '../core/errors.js';
import { defaultCacheDir, DEFAULT_CACHE_MAX_MB } from '../runner/cache.js';
import { planRun, type RunPlan } from '../runner/plan.js';
import { runRecord } from '../runner/provenance.js';
import { configDifference, resumeSettings } from '../runner/resume.js';
import type { RunOutcome } from '../runner/run.js';
import type { ScaleOptions } from '../runner/scale.js';
import { parseShard } from '../runner/shard.js';

export interface ScaleArgs {
  jobs?: number;
  threads?: number;
  resume?: string;
  'cache-dir'?: string;
  cache: boolean;
  'cache-max-mb'?: number;
  shard?: string;
}

export function scaleArgOptions<T>(y: Argv<T>): Argv<T & ScaleArgs> {
  return y
    .option('jobs', { alias: 'j', type: 'number', describe: `Jobs matched at once in worker threads (default: the cores, here ${availableParallelism()}; 1 = one at a time, in the main thread, or in one worker for module matchers so that their time limit can end them)` })
    .option('threads', { type: 'number', describe: 'Thread budget shared by the jobs and matchers that split work (default: the cores)' })
    .option('resume', { type: 'string', describe: 'Finish an interrupted run: its folder (settings come from its run.json)' })
    .option('cache', { type: 'boolean', default: true, describe: 'Use the result cache (--no-cache to match everything anew)' })
    .option('cache-dir', { type: 'string', describe: 'Result cache folder (default $PARALLAX_CACHE or .parallax-cache/)' })
    .option('cache-max-mb', { type: 'number', describe: `Prune the cache to this size after the run, least recently used first (default ${DEFAULT_CACHE_MAX_MB})` })
    .option('shard', { type: 'string', describe: 'Run shard k of N (k/N, 1-based); join the shards with `parallax merge`' }) as unknown as Argv<T & ScaleArgs>;
}

function positiveInt(name: string, v: number | undefined): number | undefined {
  if (v === undefined) return undefined;
  if (!Number.isInteger(v) || v < 1 || v > 1024) throw new UsageError(`--${name}`, `must be a whole number in 1..1024, got ${String(v)}`);
  return v;
}

/** Scale options from the command line (resume and shard aside). */
export function scaleFromArgs(a: ScaleArgs, cwd = process.cwd()): ScaleOptions {
  const cores = availableParallelism();
  const jobs = positiveInt('jobs', a.jobs) ?? cores;
  const threads = positiveInt('threads', a.threads) ?? cores;
  const maxMb = a['cache-max-mb'];
  if (maxMb !== undefined && !(Number.isFinite(maxMb) && maxMb >= 0)) throw new UsageError('--cache-max-mb', `must be a number >= 0, got ${String(maxMb)}`);
  if (!a.cache && (a['cache-dir'] !== undefined || maxMb !== undefined)) {
    throw new UsageError(a['cache-dir'] !== undefined ? '--cache-dir' : '--cache-max-mb', 'cannot be used with --no-cache');
  }
  const cache = a.cache ? { dir: a['cache-dir'] !== undefined ? resolve(cwd, a['cache-dir']) : defaultCacheDir(cwd), maxMb: maxMb ?? DEFAULT_CACHE_MAX_MB } : null;
  return { jobs, threads, cache, ...(a.shard !== undefined ? { shard: parseShard(a.shard) } : {}) };
}

/** The plan of a run to resume: its stored settings, checked against the current files and code. */
export async function resumePlan(dirArg: string, scale: ScaleOptions, cwd = process.cwd()): Promise<RunPlan> {
  if (scale.shard) throw new UsageError('--shard', 'cannot be given with --resume (the run folder knows its shard)');
  const dir = resolve(cwd, dirArg);
  const { settings, shard, info } = resumeSettings(dir);
  const plan = await planRun(settings, cwd);
  const diff = configDifference(info.config, runRecord(plan, new Date()).config);
  if (diff) throw new UsageError('--resume', `${dir} was started with another configuration: ${diff}; start a new run instead`);
  return { ...plan, scale: { ...scale, resume: true, ...(shard ? { shard } : {}) } };
}

/** One console line about the cache, or '' when the run used none. */
export function cacheLine(outcome: RunOutcome): string {
  const c = (outcome.info as { cache?: { dir: string; jobs_from_cache: number; jobs_computed: number } | null }).cache;
  if (!c) return '';
  const n = c.jobs_from_cache + c.jobs_computed;
  return `${c.jobs_from_cache} of ${n} job(s) came from the result cache (${c.dir}).\n`;
}
