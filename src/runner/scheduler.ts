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
import { pairRegions } from '../dataset/regions.js';
import { applyCondition } from '../conditions/apply.js';
import { CLEAN, configLabel, usesSeed } from '../conditions/spec.js';
import type { Manifest } from '../dataset/manifest.js';
import { pairPreviewPaths, writePairPreview } from '../report/preview.js';
import { brokenPairResult, brokenPairScores } from './broken-pair.js';
import { cacheKey, fileSha256, ResultCache } from './cache.js';
import { oneLineError, runJob, scoredOutcome, type JobOutcome } from './execute.js';
import { groupByPair, type JobKey } from './jobs.js';
import type { RunConfig, RunPlan } from './plan.js';
import { MatchPool, sharePair, type SharedPair } from './pool.js';
import { framePlaces, SequenceTracker, sequenceOrder } from './sequence.js';
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

type PoolGot = Omit<Parameters<typeof scoredOutcome>[4], 'cached'>;

/** The state of one scheduled run; each method is one step of it. */
class Scheduler {
  private readonly plan: RunPlan;
  private readonly jobsN: number;
  private readonly threads: number;
  private readonly cache: ResultCache | undefined;
  private readonly manifests: Map<string, Manifest>;
  private readonly configs: Map<string, RunConfig>;
  readonly stats: ScheduleStats;
  private readonly pool: MatchPool | undefined;
  /** Shared-memory slots of pairs whose tasks are all done, for reuse (at most jobs + 1 exist). */
  private readonly freeSlots: SharedPair[] = [];
  /** One failure (a broken pair, an abort) stops the rest: a private controller. */
  readonly stop = new AbortController();
  /** Predictions of sequence frames kept for the next frame's flicker. */
  private readonly sequences = new SequenceTracker();
  /** Program matchers run in the main thread, one job at a time per configuration. */
  private readonly chains = new Map<string, Promise<unknown>>();

  constructor(private readonly ctx: ScheduleContext) {
    const plan = (this.plan = ctx.plan);
    const scale = plan.scale ?? {};
    this.jobsN = Math.max(1, Math.floor(scale.jobs ?? 1));
    const budget = Math.max(1, Math.floor(scale.threads ?? this.jobsN));
    this.threads = threadsPerJob(budget, this.jobsN);
    this.cache = scale.cache ? new ResultCache(scale.cache.dir) : undefined;
    this.manifests = new Map(plan.datasets.map((d) => [d.manifest.name, d.manifest]));
    this.configs = new Map(plan.configs.map((c) => [c.label, c]));
    this.stats = ctx.stats ?? { cached: 0, computed: 0 };
    // A module with a time limit needs a worker to end, so its run gets a pool even at --jobs 1.
    const limited = plan.configs.some((c) => c.kind === 'matcher' && c.timeoutMs !== undefined);
    const needsPool = (this.jobsN > 1 || limited) && ctx.jobs.length > 0 && plan.configs.some((c) => this.onPool(c));
    this.pool = needsPool ? new MatchPool(Math.min(this.jobsN, ctx.jobs.length)) : undefined;
    // piscina listens on the signal once per queued task: many at once is expected here.
    setMaxListeners(0, this.stop.signal);
  }

  get signal(): AbortSignal {
    return this.stop.signal;
  }

  /** Pairs loaded at a time: the pairs being matched plus the next one being decoded. */
  get maxPairs(): number {
    return this.pool ? this.jobsN + 1 : 1;
  }

  private onPool(c: RunConfig): c is RunConfig & { kind: 'matcher' } {
    return c.kind === 'matcher' && c.source !== undefined && c.source.kind !== 'program';
  }

  private checkAbort(): void {
    if (this.signal.aborted) throw new AbortedError();
  }

  private serial<T>(label: string, f: () => Promise<T>): Promise<T> {
    const prev = this.chains.get(label) ?? Promise.resolve();
    const next = prev.then(f, f);
    this.chains.set(label, next.catch(() => undefined));
    return next;
  }

  async close(): Promise<void> {
    if (this.pool) await this.pool.close();
  }

  private async viaPool(cfg: RunConfig & { kind: 'matcher' }, pair: LoadedPair, shared: SharedPair): Promise<PoolGot> {
    // The task's own signal: the run's, or the time limit's (piscina then ends the worker and starts another).
    const task = new AbortController();
    const onStop = (): void => task.abort();
    this.signal.addEventListener('abort', onStop, { once: true });
    let timedOut = false;
    let timer: NodeJS.Timeout | undefined;
    const startClock = (): void => {
      if (cfg.timeoutMs === undefined) return;
      timer = setTimeout(() => {
        timedOut = true;
        task.abort();
      }, cfg.timeoutMs);
    };
    try {
      const reply = await this.pool!.run(
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
          files: { pairId: pair.id, left: pair.files.left, right: pair.files.right, ...(pair.condition !== undefined ? { condition: pair.condition } : {}) },
          threads: this.threads,
        },
        task.signal,
        startClock,
      );
      return reply.ok
        ? { disparity: reply.disparity, confidence: reply.confidence, timeMs: reply.timeMs, peakMb: reply.peakMb }
        : { disparity: null, error: reply.error, timeMs: reply.timeMs, peakMb: reply.peakMb };
    } catch (e) {
      if (timedOut && !this.signal.aborted) {
        return { disparity: null, error: `${cfg.label}: timed out after ${cfg.timeoutMs} ms (worker thread ended)`, timeMs: null, peakMb: null };
      }
      if (this.signal.aborted || isAbort(e)) throw new AbortedError();
      // The worker itself died (out of memory, process.exit in a module...): this job fails.
      return { disparity: null, error: `worker thread failed: ${oneLineError(e)}`, timeMs: null, peakMb: null };
    } finally {
      clearTimeout(timer);
      this.signal.removeEventListener('abort', onStop);
    }
  }

  /** Load the pair of a group; a pair that cannot be loaded is recorded as failed for every configuration (null). */
  private async loadOrRecordBroken(group: readonly JobKey[]): Promise<LoadedPair | null> {
    const first = group[0];
    const manifest = this.manifests.get(first.dataset)!;
    const entry: PairEntry | undefined = manifest.pairs.find((p) => p.id === first.pair);
    if (!entry) throw new InputError(manifest.file, `pair ${first.pair} is not in the manifest`);
    try {
      return await loadPair(manifest, entry);
    } catch (e) {
      if (this.signal.aborted || isAbort(e)) throw new AbortedError();
      const message = oneLineError(e);
      this.ctx.onPairError?.(manifest.name, entry.id, message);
      const scores = await brokenPairScores(manifest, entry, this.plan, this.plan);
      for (const key of group) {
        this.checkAbort();
        const cfg = this.configs.get(key.label)!;
        await this.ctx.onResult(brokenPairResult(cfg, { dataset: manifest.name, condition: key.condition }, entry, message, scores, this.plan), null, cfg, { dataset: manifest.name, id: entry.id, width: 0, height: 0 });
      }
      return null;
    }
  }

  /** The pair's regions, and its report thumbnails unless the run folder has them. */
  private async regionsOf(pair: LoadedPair): Promise<RegionMap> {
    const regions = pairRegions(pair, this.plan);
    if (!existsSync(pairPreviewPaths(this.plan.runDir, pair.dataset, pair.id).regions)) {
      try {
        await writePairPreview(this.plan.runDir, pair.dataset, pair.id, pair.left, regions);
      } catch {
        /* thumbnails only save the report time: the report rebuilds them from the dataset */
      }
    }
    return regions;
  }

  /**
   * The pair as a condition shows it, made once per pair and condition: the images
   * changed, the clean regions kept (a lower resolution builds its own).
   */
  private conditionWork(clean: PairWork, works: Map<string, PairWork>, condition: string): PairWork {
    let w = works.get(condition);
    if (!w) {
      const pair = applyCondition(clean.pair, condition, this.plan.conditionSeed);
      const regions = pair.width === clean.pair.width && pair.height === clean.pair.height ? clean.regions : pairRegions(pair, this.plan);
      if (this.cache) clean.hashes ??= hashesOf(clean.pair);
      w = { pair, regions, ...(clean.hashes ? { hashes: clean.hashes } : {}) };
      works.set(condition, w);
    }
    return w;
  }

  async runGroup(group: JobKey[]): Promise<void> {
    const pair = await this.loadOrRecordBroken(group);
    if (!pair) return;
    this.checkAbort();
    const p: PairWork = { pair, regions: await this.regionsOf(pair) };
    const works = new Map<string, PairWork>([[CLEAN, p]]);
    const workOf = (key: JobKey): PairWork => this.conditionWork(p, works, key.condition);
    if (!this.pool) {
      for (const key of group) await this.runOne(key, workOf(key));
      return;
    }
    const settled = await Promise.allSettled(group.map((key) => this.runOne(key, workOf(key))));
    // Every task of this pair has settled: its shared buffers may take the next pair.
    for (const w of works.values()) if (w.shared) this.freeSlots.push(w.shared);
    const bad = settled.find((s) => s.status === 'rejected') as PromiseRejectedResult | undefined;
    if (bad) throw bad.reason;
  }

  /** The cache key of a matcher job, and its cached outcome when there is one. */
  private async fromCache(cfg: RunConfig, p: PairWork): Promise<{ key?: string; outcome?: JobOutcome }> {
    if (!this.cache || cfg.kind !== 'matcher') return {};
    const { pair } = p;
    p.hashes ??= hashesOf(pair);
    const [leftHash, rightHash] = await p.hashes;
    // The seed is part of the key only where it changes the images (noise).
    const condition = pair.condition !== undefined ? { condition: pair.condition, ...(usesSeed(pair.condition) ? { conditionSeed: this.plan.conditionSeed } : {}) } : {};
    const key = cacheKey({ leftHash, rightHash, matcherId: cfg.matcherId, codeHash: cfg.codeHash, params: cfg.params, minDisparity: pair.disparityRange[0], maxDisparity: pair.disparityRange[1], ...condition });
    const hit = this.cache.get(key, pair.width, pair.height);
    if (!hit) return { key };
    this.stats.cached++;
    return { key, outcome: scoredOutcome(cfg, pair, p.regions, this.plan, { disparity: hit.data, confidence: hit.confidence, timeMs: hit.timeMs, peakMb: hit.peakMb, cached: true }) };
  }

  /** Run the job: on the pool, serialised in the main thread (programs next to a pool), or in the main thread. */
  private async compute(cfg: RunConfig, p: PairWork): Promise<JobOutcome> {
    const { pair, regions } = p;
    if (this.pool && this.onPool(cfg)) {
      p.shared ??= sharePair(pair, this.freeSlots.pop());
      const got = await this.viaPool(cfg, pair, p.shared);
      this.checkAbort();
      return scoredOutcome(cfg, pair, regions, this.plan, got);
    }
    const run = (): Promise<JobOutcome> => runJob(cfg, pair, regions, this.plan, this.signal, this.threads);
    return this.pool ? this.serial(cfg.label, run) : run();
  }

  private async store(key: string, cfg: RunConfig, pair: LoadedPair, outcome: JobOutcome): Promise<void> {
    if (!this.cache || !outcome.disparity || outcome.result.status !== 'ok') return;
    try {
      await this.cache.put(key, { width: pair.width, height: pair.height, data: outcome.disparity, confidence: outcome.confidence, timeMs: outcome.result.time_ms, peakMb: outcome.result.peak_mb, matcherId: cfg.matcherId });
    } catch {
      this.stats.cacheWriteErrors = (this.stats.cacheWriteErrors ?? 0) + 1; // the cache only saves time: a full or read-only disk must not end the run
    }
  }

  private async runOne(jobKey: JobKey, p: PairWork): Promise<void> {
    this.checkAbort();
    const cfg = this.configs.get(jobKey.label)!;
    const frame = this.sequences.begin(configLabel({ matcher: cfg.label, ...(p.pair.condition !== undefined ? { condition: p.pair.condition } : {}) }), p.pair);
    try {
      const cached = await this.fromCache(cfg, p);
      let outcome = cached.outcome;
      if (!outcome) {
        outcome = await this.compute(cfg, p);
        this.stats.computed++;
        if (cached.key) await this.store(cached.key, cfg, p.pair, outcome);
      }
      await this.sequences.finish(frame, outcome.result, outcome.disparity, p.pair, p.regions);
      this.checkAbort();
      await this.ctx.onResult(outcome.result, outcome.disparity, cfg, p.pair);
    } finally {
      this.sequences.abandon(frame);
    }
  }

  /** Pair groups in the order to start them: framed pairs of a sequence in frame order. */
  order(groups: JobKey[][]): JobKey[][] {
    return sequenceOrder(groups, framePlaces(this.manifests.values()));
  }
}

/** sha256 of the pair's two image files (the cache key's inputs; a condition is keyed on top of them). */
function hashesOf(pair: LoadedPair): Promise<[string, string]> {
  return Promise.all([fileSha256(pair.files.left), fileSha256(pair.files.right)]);
}

/** A loaded pair while its configurations run: regions, and what its jobs share once made. */
interface PairWork {
  pair: LoadedPair;
  regions: RegionMap;
  shared?: SharedPair;
  hashes?: Promise<[string, string]>;
}

export async function runScheduled(ctx: ScheduleContext): Promise<ScheduleStats> {
  const s = new Scheduler(ctx);
  const onOuter = (): void => s.stop.abort();
  if (ctx.signal.aborted) s.stop.abort();
  ctx.signal.addEventListener('abort', onOuter, { once: true });
  const inFlight = new Set<Promise<void>>();
  let failure: unknown;
  try {
    for (const group of s.order(groupByPair(ctx.jobs))) {
      if (s.signal.aborted) break;
      while (inFlight.size >= s.maxPairs) await Promise.race(inFlight);
      if (s.signal.aborted) break;
      const p: Promise<void> = s.runGroup(group).then(
        () => void inFlight.delete(p),
        (e: unknown) => {
          inFlight.delete(p);
          // Keep the first real error; aborts caused by it are consequences.
          if (failure === undefined || (isAbort(failure) && !isAbort(e))) failure = e;
          s.stop.abort();
        },
      );
      inFlight.add(p);
    }
    await Promise.all(inFlight);
  } finally {
    ctx.signal.removeEventListener('abort', onOuter);
    await s.close();
  }
  if (failure !== undefined) throw isAbort(failure) ? new AbortedError() : failure;
  if (s.signal.aborted) throw new AbortedError();
  return s.stats;
}
