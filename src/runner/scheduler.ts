/**
 * Scheduling of a run's jobs: pairs in sorted order, each loaded once and scored with
 * its regions once, its configurations run either in the main thread one after the
 * other (jobs = 1) or on the worker pool (jobs > 1).
 *
 * Memory: at most jobs + 1 pairs are loaded at a time (the next pair is decoded while
 * the workers match); a pair is dropped once all its configurations are done.
 * Threads: each job gets MatchInput.threads = max(1, floor(budget / jobs)).
 * Cache: before a matcher configuration runs, the result cache is asked; a hit is
 * scored from the cached disparity and marked `cached: true` with its original time.
 * Results reach `onResult` in completion order; tables sort them later.
 * A pair that cannot be loaded (broken-pair.ts) is reported through `onPairError` and
 * each of its configurations is recorded as failed; the other pairs go on.
 * Pair thumbnails for the report (report/preview.ts writePairPreview) are written once
 * per pair when it is loaded, unless the run folder already has them (resume).
 */
import { setMaxListeners } from 'node:events';
import { existsSync } from 'node:fs';
import { AbortedError, InputError } from '../core/errors.js';
import type { LoadedPair, PairEntry } from '../core/pair.js';
import type { RegionMap } from '../core/regions.js';
import type { JobResult } from '../core/score.js';
import { loadPair } from '../dataset/load.js';
import { buildRegions } from '../dataset/regions.js';
import type { Manifest } from '../dataset/manifest.js';
import { pairPreviewPaths, writePairPreview } from '../report/preview.js';
import { brokenPairResult, brokenPairScores } from './broken-pair.js';
import { cacheKey, fileSha256, ResultCache } from './cache.js';
import { oneLineError, runJob, scoredOutcome, type JobOutcome } from './execute.js';
import { groupByPair, type JobKey } from './jobs.js';
import type { RunConfig, RunPlan } from './plan.js';
import { MatchPool, sharePair, type SharedPair } from './pool.js';
import { threadsPerJob } from './scale.js';

export interface ScheduleContext {
  plan: RunPlan;
  jobs: readonly JobKey[];
  signal: AbortSignal;
  /** Called once per finished job (in completion order). `pair` is the loaded pair, or only its ids and size (0x0 when unknown) for a broken pair. */
  onResult(result: JobResult, disparity: Float32Array | null, cfg: RunConfig, pair: PairRef): Promise<void> | void;
  /** Called once per pair that cannot be loaded (one-line message naming the file), before its failed results. */
  onPairError?(dataset: string, pair: string, message: string): void;
  /** Filled as jobs finish (so the counts survive an abort). */
  stats?: ScheduleStats;
}

export interface ScheduleStats {
  cached: number;
  computed: number;
  /** Outputs that could not be stored in the cache (the run goes on). */
  cacheWriteErrors?: number;
}

/** What onResult needs to know of a pair. */
export type PairRef = Pick<LoadedPair, 'dataset' | 'id' | 'width' | 'height'>;

function isAbort(e: unknown): boolean {
  return e instanceof AbortedError || (e instanceof Error && (e.name === 'AbortError' || (e as { code?: string }).code === 'ABORT_ERR'));
}

export async function runScheduled(ctx: ScheduleContext): Promise<ScheduleStats> {
  const { plan } = ctx;
  const scale = plan.scale ?? {};
  const jobsN = Math.max(1, Math.floor(scale.jobs ?? 1));
  const budget = Math.max(1, Math.floor(scale.threads ?? jobsN));
  const threads = threadsPerJob(budget, jobsN);
  const cache = scale.cache ? new ResultCache(scale.cache.dir) : undefined;
  const manifests = new Map<string, Manifest>(plan.datasets.map((d) => [d.manifest.name, d.manifest]));
  const configs = new Map<string, RunConfig>(plan.configs.map((c) => [c.label, c]));
  const stats: ScheduleStats = ctx.stats ?? { cached: 0, computed: 0 };
  const groups = groupByPair(ctx.jobs);
  const needsPool = jobsN > 1 && groups.length > 0 && plan.configs.some((c) => c.kind === 'matcher' && c.source && c.source.kind !== 'program');
  const pool = needsPool ? new MatchPool(Math.min(jobsN, ctx.jobs.length)) : undefined;
  /** Shared-memory slots of pairs whose tasks are all done, for reuse (at most jobs + 1 exist). */
  const freeSlots: SharedPair[] = [];
  // One failure (a broken pair, an abort) stops the rest: a private controller.
  const stop = new AbortController();
  // piscina listens on the signal once per queued task: many at once is expected here.
  setMaxListeners(0, stop.signal);
  const onOuter = (): void => stop.abort();
  if (ctx.signal.aborted) stop.abort();
  ctx.signal.addEventListener('abort', onOuter, { once: true });
  const signal = stop.signal;
  // Program matchers run in the main thread, one job at a time per configuration.
  const chains = new Map<string, Promise<unknown>>();
  const serial = <T>(label: string, f: () => Promise<T>): Promise<T> => {
    const prev = chains.get(label) ?? Promise.resolve();
    const next = prev.then(f, f);
    chains.set(label, next.catch(() => undefined));
    return next;
  };

  async function viaPool(cfg: RunConfig & { kind: 'matcher' }, pair: LoadedPair, shared: SharedPair): Promise<Omit<Parameters<typeof scoredOutcome>[4], 'cached'>> {
    try {
      const reply = await pool!.run(
        {
          source: cfg.source!,
          params: cfg.params,
          width: pair.width,
          height: pair.height,
          left: shared.left,
          right: shared.right,
          leftColor: shared.leftColor,
          rightColor: shared.rightColor,
          minDisparity: pair.disparityRange[0],
          maxDisparity: pair.disparityRange[1],
          files: { pairId: pair.id, left: pair.files.left, right: pair.files.right },
          threads,
        },
        signal,
      );
      return reply.ok
        ? { disparity: reply.disparity, timeMs: reply.timeMs, peakMb: reply.peakMb }
        : { disparity: null, error: reply.error, timeMs: reply.timeMs, peakMb: reply.peakMb };
    } catch (e) {
      if (signal.aborted || isAbort(e)) throw new AbortedError();
      // The worker itself died (out of memory, process.exit in a module...): this job fails.
      return { disparity: null, error: `worker thread failed: ${oneLineError(e)}`, timeMs: null, peakMb: null };
    }
  }

  async function runGroup(group: JobKey[]): Promise<void> {
    const first = group[0]!;
    const manifest = manifests.get(first.dataset)!;
    const entry: PairEntry | undefined = manifest.pairs.find((p) => p.id === first.pair);
    if (!entry) throw new InputError(manifest.file, `pair ${first.pair} is not in the manifest`);
    let pair: LoadedPair;
    try {
      pair = await loadPair(manifest, entry);
    } catch (e) {
      if (signal.aborted || isAbort(e)) throw new AbortedError();
      // A broken pair: recorded as failed for every configuration; the run goes on.
      const message = oneLineError(e);
      ctx.onPairError?.(manifest.name, entry.id, message);
      const scores = await brokenPairScores(manifest, entry, plan.regions, plan);
      for (const key of group) {
        if (signal.aborted) throw new AbortedError();
        const cfg = configs.get(key.label)!;
        await ctx.onResult(brokenPairResult(cfg, manifest.name, entry, message, scores, plan), null, cfg, { dataset: manifest.name, id: entry.id, width: 0, height: 0 });
      }
      return;
    }
    if (signal.aborted) throw new AbortedError();
    // As run.ts pairRegions: the manifest's occlusion mask, or one derived from the truth.
    const regions: RegionMap = buildRegions(pair.truth.data, pair.leftGray, pair.occlusion, pair.width, pair.height, plan.regions);
    if (!existsSync(pairPreviewPaths(plan.runDir, pair.dataset, pair.id).regions)) {
      try {
        await writePairPreview(plan.runDir, pair.dataset, pair.id, pair.left, regions);
      } catch {
        /* thumbnails only save the report time: the report rebuilds them from the dataset */
      }
    }
    let shared: SharedPair | undefined;
    let hashes: Promise<[string, string]> | undefined;
    const fileHashes = (): Promise<[string, string]> => (hashes ??= Promise.all([fileSha256(pair.files.left), fileSha256(pair.files.right)]));

    const one = async (key: JobKey): Promise<void> => {
      if (signal.aborted) throw new AbortedError();
      const cfg = configs.get(key.label)!;
      let outcome: JobOutcome | undefined;
      let ckey: string | undefined;
      if (cache && cfg.kind === 'matcher') {
        const [leftHash, rightHash] = await fileHashes();
        ckey = cacheKey({ leftHash, rightHash, matcherId: cfg.matcherId, codeHash: cfg.codeHash, params: cfg.params, minDisparity: pair.disparityRange[0], maxDisparity: pair.disparityRange[1] });
        const hit = cache.get(ckey, pair.width, pair.height);
        if (hit) {
          outcome = scoredOutcome(cfg, pair, regions, plan, { disparity: hit.data, timeMs: hit.timeMs, peakMb: hit.peakMb, cached: true });
          stats.cached++;
        }
      }
      if (!outcome) {
        if (pool && cfg.kind === 'matcher' && cfg.source && cfg.source.kind !== 'program') {
          shared ??= sharePair(pair, freeSlots.pop());
          const got = await viaPool(cfg, pair, shared);
          if (signal.aborted) throw new AbortedError();
          outcome = scoredOutcome(cfg, pair, regions, plan, got);
        } else if (pool) {
          outcome = await serial(cfg.label, () => runJob(cfg, pair, regions, plan, signal, threads));
        } else {
          outcome = await runJob(cfg, pair, regions, plan, signal, threads);
        }
        stats.computed++;
        if (cache && ckey && outcome.disparity && outcome.result.status === 'ok') {
          try {
            await cache.put(ckey, { width: pair.width, height: pair.height, data: outcome.disparity, timeMs: outcome.result.time_ms, peakMb: outcome.result.peak_mb, matcherId: cfg.matcherId });
          } catch {
            stats.cacheWriteErrors = (stats.cacheWriteErrors ?? 0) + 1; // the cache only saves time: a full or read-only disk must not end the run
          }
        }
      }
      if (signal.aborted) throw new AbortedError();
      await ctx.onResult(outcome.result, outcome.disparity, cfg, pair);
    };

    if (!pool) {
      for (const key of group) await one(key);
    } else {
      const settled = await Promise.allSettled(group.map(one));
      // Every task of this pair has settled: its shared buffers may take the next pair.
      if (shared) freeSlots.push(shared);
      const bad = settled.find((s) => s.status === 'rejected') as PromiseRejectedResult | undefined;
      if (bad) throw bad.reason;
    }
  }

  const inFlight = new Set<Promise<void>>();
  let failure: unknown;
  const maxPairs = pool ? jobsN + 1 : 1;
  try {
    for (const group of groups) {
      if (signal.aborted) break;
      while (inFlight.size >= maxPairs) await Promise.race(inFlight);
      if (signal.aborted) break;
      const p: Promise<void> = runGroup(group).then(
        () => void inFlight.delete(p),
        (e: unknown) => {
          inFlight.delete(p);
          // Keep the first real error; aborts caused by it are consequences.
          if (failure === undefined || (isAbort(failure) && !isAbort(e))) failure = e;
          stop.abort();
        },
      );
      inFlight.add(p);
    }
    await Promise.all(inFlight);
  } finally {
    ctx.signal.removeEventListener('abort', onOuter);
    if (pool) await pool.close();
  }
  if (failure !== undefined) throw isAbort(failure) ? new AbortedError() : failure;
  if (signal.aborted) throw new AbortedError();
  return stats;
}
