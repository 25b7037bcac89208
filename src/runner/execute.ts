/**
 * Execution of one job: run a matcher (or read an imported prediction) on a loaded
 * pair, validate the output, score it. Never throws for a matcher's failure: a throw,
 * a bad output or a bad prediction file becomes a `failed` result scored as
 * all-invalid. Only an abort (AbortedError) propagates.
 */
import { AbortedError } from '../core/errors.js';
import { pairFields, type LoadedPair } from '../core/pair.js';
import type { RegionMap } from '../core/regions.js';
import type { JobResult } from '../core/score.js';
import { scorePair } from '../metrics/score.js';
import { layoutOf } from './broken-pair.js';
import type { MatchInput } from '../core/matcher.js';
import { startPeakSampler } from './memory.js';
import type { MatcherRunConfig, RunConfig } from './plan.js';
import { readPrediction } from './predictions.js';
import type { MetricSet } from '../metrics/catalogue.js';

/** Longest error text kept in a result. */
const MAX_ERROR_CHARS = 600;

/** One line: the first line of an error message, whitespace folded, bounded. */
export function oneLineError(e: unknown): string {
  const raw = e instanceof Error ? e.message || e.name : String(e);
  const line = raw.replace(/\s*\n\s*/g, ' | ').replace(/\s+/g, ' ').trim() || 'unknown error';
  return line.length > MAX_ERROR_CHARS ? line.slice(0, MAX_ERROR_CHARS - 1) + '…' : line;
}

/** A checked matcher output: the disparity and, when the matcher gave one, its confidence map. */
export interface CheckedOutput {
  disparity: Float32Array;
  confidence: Float32Array | null;
}

/** Check a matcher's return value: a disparity Float32Array of width*height (directly or in { disparity }), and its optional confidence. */
export function checkOutput(out: unknown, width: number, height: number): CheckedOutput {
  const disparity = validateOutput(out, width, height);
  const conf = out instanceof Float32Array ? undefined : (out as { confidence?: unknown }).confidence;
  if (conf === undefined || conf === null) return { disparity, confidence: null };
  if (!(conf instanceof Float32Array) || conf.length !== width * height) {
    throw new Error(`returned a confidence that is not a Float32Array of ${width}x${height} values`);
  }
  return { disparity, confidence: conf };
}

/** Check a matcher's return value: a Float32Array of width*height (directly or in { disparity }). */
export function validateOutput(out: unknown, width: number, height: number): Float32Array {
  const arr = out instanceof Float32Array ? out : (out as { disparity?: unknown } | null)?.disparity;
  if (!(arr instanceof Float32Array)) {
    const v = arr === undefined ? out : arr;
    const what = v === null || v === undefined ? String(v) : typeof v === 'object' ? Object.prototype.toString.call(v).slice(8, -1) : typeof v;
    throw new Error(`returned ${what}, expected a Float32Array of ${width}x${height} values`);
  }
  if (arr.length !== width * height) {
    throw new Error(`returned ${arr.length} values, expected ${width}x${height} = ${width * height}`);
  }
  return arr;
}

export interface JobOutcome {
  result: JobResult;
  /** The output when the job succeeded (for previews). */
  disparity: Float32Array | null;
  /** Its confidence map, when the matcher or the predictions folder gave one. */
  confidence: Float32Array | null;
}

export function matchInput(pair: LoadedPair, threads = 1): MatchInput {
  // Copies: a matcher that writes into its input cannot affect the next one.
  return {
    width: pair.width,
    height: pair.height,
    left: pair.leftGray.slice(),
    right: pair.rightGray.slice(),
    leftColor: pair.left,
    rightColor: pair.right,
    minDisparity: pair.disparityRange[0],
    maxDisparity: pair.disparityRange[1],
    source: { pairId: pair.id, left: pair.files.left, right: pair.files.right, ...(pair.condition !== undefined ? { condition: pair.condition } : {}) },
    threads,
  };
}

/** The match time a matcher reported itself (MatchOutput.selfTimeMs), when it is a finite number >= 0. */
export function selfTime(out: unknown): number | undefined {
  if (out === null || typeof out !== 'object' || out instanceof Float32Array) return undefined;
  const t = (out as { selfTimeMs?: unknown }).selfTimeMs;
  return typeof t === 'number' && Number.isFinite(t) && t >= 0 ? t : undefined;
}

/** Milliseconds kept to the microsecond. */
const ms3 = (t: number): number => Math.round(t * 1000) / 1000;

async function runMatcher(
  cfg: MatcherRunConfig,
  pair: LoadedPair,
  signal: AbortSignal,
  threads = 1,
): Promise<{ disparity: Float32Array | null; confidence?: Float32Array | null; error?: string; timeMs: number | null; wallMs: number | null; peakMb: number | null }> {
  const input = matchInput(pair, threads);
  const sampler = startPeakSampler();
  const t0 = performance.now();
  let out: unknown;
  let error: string | undefined;
  try {
    out = await cfg.plugin.match(input, cfg.params, signal);
  } catch (e) {
    if (signal.aborted) {
      sampler.stop();
      throw new AbortedError();
    }
    error = oneLineError(e);
  }
  const wallMs = performance.now() - t0;
  const peakMb = sampler.stop();
  if (error !== undefined) return { disparity: null, error, timeMs: wallMs, wallMs, peakMb };
  const self = selfTime(out);
  const timeMs = self ?? wallMs;
  try {
    return { ...checkOutput(out, pair.width, pair.height), timeMs, wallMs, peakMb };
  } catch (e) {
    return { disparity: null, error: oneLineError(e), timeMs, wallMs, peakMb };
  }
}

/** Run one configuration on one loaded pair and score it. */
export async function runJob(
  cfg: RunConfig,
  pair: LoadedPair,
  regions: RegionMap,
  set: MetricSet,
  signal: AbortSignal,
  threads = 1,
): Promise<JobOutcome> {
  if (signal.aborted) throw new AbortedError();
  let disparity: Float32Array | null = null;
  let confidence: Float32Array | null = null;
  let error: string | undefined;
  let timeMs: number | null = null;
  let wallMs: number | undefined;
  let peakMb: number | null = null;
  if (cfg.kind === 'matcher') {
    const r = await runMatcher(cfg, pair, signal, threads);
    disparity = r.disparity;
    confidence = r.confidence ?? null;
    error = r.error;
    timeMs = r.timeMs === null ? null : ms3(r.timeMs);
    if (r.wallMs !== null) wallMs = ms3(r.wallMs);
    peakMb = r.peakMb;
  } else {
    try {
      ({ disparity, confidence } = await readPrediction(cfg.source, pair));
    } catch (e) {
      error = oneLineError(e);
    }
  }
  return scoredOutcome(cfg, pair, regions, set, { disparity, confidence, ...(error !== undefined ? { error } : {}), timeMs, ...(wallMs !== undefined ? { wallMs } : {}), peakMb });
}

/** Score a matcher's output obtained elsewhere (a worker thread, the result cache). */
export function scoredOutcome(
  cfg: RunConfig,
  pair: LoadedPair,
  regions: RegionMap,
  set: MetricSet,
  got: { disparity: Float32Array | null; confidence?: Float32Array | null; error?: string; timeMs: number | null; wallMs?: number | null; peakMb: number | null; cached?: boolean },
): JobOutcome {
  const { disparity, error, timeMs, peakMb } = got;
  const confidence = disparity ? (got.confidence ?? null) : null;
  const scores = scorePair(
    disparity,
    pair.truth.data,
    regions,
    { thresholds: set.thresholds, quantiles: set.quantiles, ...(pair.camera ? { camera: pair.camera } : {}) },
    confidence,
  );
  const result: JobResult = {
    matcher: cfg.label,
    matcherId: cfg.matcherId,
    ...(pair.condition !== undefined ? { condition: pair.condition } : {}),
    params: cfg.params,
    dataset: pair.dataset,
    pair: pair.id,
    status: disparity ? 'ok' : 'failed',
    ...(error !== undefined ? { error } : {}),
    time_ms: timeMs,
    ...(got.wallMs !== undefined ? { wall_ms: got.wallMs } : {}),
    peak_mb: peakMb,
    ...(got.cached ? { cached: true } : {}),
    scores,
    ...layoutOf(regions),
    thresholds: [...set.thresholds],
    quantiles: [...set.quantiles],
    ...pairFields(pair),
  };
  return { result, disparity, confidence };
}
