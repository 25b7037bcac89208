/**
 * Worker-thread side of the match pool (pool.ts). Runs one matcher configuration on
 * one pair and hands the disparity back (its buffer is transferred, not cloned).
 *
 * The pair's luminance and colour samples arrive in SharedArrayBuffers that the main
 * thread filled once per pair: every configuration of the pair reads the same memory,
 * nothing is copied on the way. Like the sequential runner, the worker then gives the
 * matcher its own copy of the two luminance images, so a matcher that writes into its
 * input cannot change what the next configuration sees.
 *
 * Only built-in and module matchers run here (rebuilt from their serialisable source
 * once per worker); program matchers stay in the main thread (they are processes anyway).
 * This file runs compiled (dist/src/runner/worker.js): worker threads cannot load .ts.
 */
import { getHeapStatistics, setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import { move } from 'piscina';
import type { RasterImage } from '../core/image.js';
import type { ParamValue } from '../core/params.js';
import type { MatchInput, MatcherPlugin } from '../core/matcher.js';
import { pluginFromSource, type MatcherSource } from '../plugins/registry.js';
import { checkOutput, oneLineError, type CheckedOutput } from './execute.js';
import { startPeakSampler } from './memory.js';

export interface SharedRaster {
  width: number;
  height: number;
  channels: 1 | 2 | 3 | 4;
  bitDepth: 8 | 16;
  buffer: SharedArrayBuffer;
}

export interface MatchTask {
  source: MatcherSource;
  params: Record<string, ParamValue>;
  width: number;
  height: number;
  left: SharedArrayBuffer;
  right: SharedArrayBuffer;
  leftColor: SharedRaster;
  rightColor: SharedRaster;
  minDisparity: number;
  maxDisparity: number;
  files: { pairId: string; left: string; right: string; condition?: string };
  threads: number;
}

/** A failure as a plain object; a success arrives as one transferred ArrayBuffer (decodeReply). */
export type MatchReply = ArrayBuffer | { ok: false; error: string; timeMs: number | null; peakMb: number | null };

export type DecodedReply =
  | { ok: true; disparity: Float32Array; confidence: Float32Array | null; timeMs: number; peakMb: number }
  | { ok: false; error: string; timeMs: number | null; peakMb: number | null };

/** float64 time, peak and whether a confidence plane follows the disparity. */
const REPLY_HEADER_BYTES = 24;

/** The main thread's view of a reply (no copy: the disparity is a view of the moved buffer). */
export function decodeReply(r: MatchReply): DecodedReply {
  if (!(r instanceof ArrayBuffer)) return r;
  const head = new Float64Array(r, 0, 3);
  const planes = head[2] === 1 ? 2 : 1;
  const n = (r.byteLength - REPLY_HEADER_BYTES) / 4 / planes;
  return {
    ok: true,
    timeMs: head[0],
    peakMb: head[1],
    disparity: new Float32Array(r, REPLY_HEADER_BYTES, n),
    confidence: planes === 2 ? new Float32Array(r, REPLY_HEADER_BYTES + 4 * n, n) : null,
  };
}

const plugins = new Map<string, Promise<MatcherPlugin>>();

function plugin(source: MatcherSource): Promise<MatcherPlugin> {
  const key = JSON.stringify(source);
  let p = plugins.get(key);
  if (!p) {
    p = pluginFromSource(source);
    plugins.set(key, p);
  }
  return p;
}

function raster(s: SharedRaster): RasterImage {
  const data = s.bitDepth === 16 ? new Uint16Array(s.buffer) : new Uint8Array(s.buffer);
  return { width: s.width, height: s.height, channels: s.channels, bitDepth: s.bitDepth, data };
}

/** Piscina's task function. */
export default async function runMatchTask(task: MatchTask): Promise<MatchReply> {
  const reply = await matchOnce(task);
  // matchOnce's frame is gone: the matcher's memory and the input copies are garbage now.
  collectGarbage();
  return reply;
}

async function matchOnce(task: MatchTask): Promise<MatchReply> {
  let p: MatcherPlugin;
  try {
    p = await plugin(task.source);
  } catch (e) {
    return { ok: false, error: oneLineError(e), timeMs: null, peakMb: null };
  }
  const input: MatchInput = {
    width: task.width,
    height: task.height,
    left: new Float32Array(task.left).slice(),
    right: new Float32Array(task.right).slice(),
    leftColor: raster(task.leftColor),
    rightColor: raster(task.rightColor),
    minDisparity: task.minDisparity,
    maxDisparity: task.maxDisparity,
    source: task.files,
    threads: task.threads,
  };
  // Piscina ends the thread to cancel a running task; this signal never fires here.
  const signal = new AbortController().signal;
  const sampler = startPeakSampler();
  const t0 = performance.now();
  let out: unknown;
  try {
    out = await p.match(input, task.params, signal);
  } catch (e) {
    const timeMs = Math.round((performance.now() - t0) * 1000) / 1000;
    return { ok: false, error: oneLineError(e), timeMs, peakMb: sampler.stop() };
  }
  const timeMs = Math.round((performance.now() - t0) * 1000) / 1000;
  const peakMb = sampler.stop();
  let checked: CheckedOutput;
  try {
    checked = checkOutput(out, task.width, task.height);
  } catch (e) {
    return { ok: false, error: oneLineError(e), timeMs, peakMb };
  }
  // A copy the matcher holds no reference to, moved (transferred, not cloned) to the main
  // thread: float64 time, peak and confidence flag, then the float32 disparity and the
  // confidence when there is one (see decodeReply).
  const n = checked.disparity.length;
  const conf = checked.confidence;
  const buf = new ArrayBuffer(REPLY_HEADER_BYTES + n * 4 * (conf ? 2 : 1));
  const head = new Float64Array(buf, 0, 3);
  head[0] = timeMs;
  head[1] = peakMb;
  head[2] = conf ? 1 : 0;
  new Float32Array(buf, REPLY_HEADER_BYTES, n).set(checked.disparity);
  if (conf) new Float32Array(buf, REPLY_HEADER_BYTES + 4 * n, n).set(conf);
  return move(buf) as unknown as MatchReply;
}

/**
 * Garbage collection between tasks. A worker's V8 heap stays small (~9 MB used), so V8
 * rarely collects on its own; what piles up meanwhile lies outside the heap: matcher wasm
 * memories (block makes ~10 MB per call), the input copies and output buffers. V8 frees
 * those only when a collection finds them dead, driven by external-memory pressure, so a
 * worker's external memory swung between 12 and ~100 MB and a long run reached higher
 * peaks than a short one. After each task: a scavenge (young generation, ~1-4 ms), and a
 * full collection only if external memory is still above EXTERNAL_LIMIT. Measured on 500
 * pairs at 640x480 with block: external memory per worker 12-25 MB throughout; cost about
 * 5% more CPU (58.0 -> 61.0 s for the 500 pairs, load ~2), wall time no worse (45.7 -> 41.7 s).
 * Tried too: no scavenge and a full collection above 48 MiB, no cheaper (61.7 s CPU).
 * `gc` comes from a fresh vm context once the flag is set (a worker's execArgv may not
 * carry V8 flags); the flag only exposes the function, it changes no collector setting.
 * PARALLAX_WORKER_GC=off turns this off (for measuring its effect: bench/runner.ts).
 */
const EXTERNAL_LIMIT = 24 * 1024 * 1024;
let gcFn: ((opts?: { type?: 'major' | 'minor' }) => void) | null | undefined;

function exposedGc(): typeof gcFn {
  try {
    setFlagsFromString('--expose-gc');
    return runInNewContext('gc') as typeof gcFn;
  } catch {
    return null; // not available: V8 collects on its own schedule
  }
}

export function collectGarbage(): void {
  if (gcFn === undefined) {
    gcFn = process.env.PARALLAX_WORKER_GC === 'off' ? null : exposedGc();
  }
  if (!gcFn) return;
  gcFn({ type: 'minor' });
  if (getHeapStatistics().external_memory > EXTERNAL_LIMIT) gcFn();
}
