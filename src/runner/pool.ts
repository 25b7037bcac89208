/**
 * The match pool: worker threads (piscina) that run matcher configurations on pairs.
 * See worker.ts for what crosses the thread boundary: the pair in SharedArrayBuffers
 * (one copy per pair, slots reused pair after pair), the output in a transferred buffer.
 * A task aborted through its signal is cancelled: a queued task is dropped, a running
 * one ends with its worker thread (piscina terminates it), which is the only way to
 * stop a synchronous matcher.
 */
import { existsSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Piscina } from 'piscina';
import { InputError } from '../core/errors.js';
import type { LoadedPair } from '../core/pair.js';
import type { RasterImage } from '../core/image.js';
import { decodeReply, type DecodedReply, type MatchReply, type MatchTask, type SharedRaster } from './worker.js';

/**
 * The compiled worker file. From dist/src/runner/pool.js it is the neighbour
 * worker.js; from the TypeScript source (tests) it is <root>/dist/src/runner/worker.js,
 * which `npm run build` writes.
 */
export function workerFile(moduleUrl: string = import.meta.url): string {
  const here = fileURLToPath(moduleUrl);
  if (here.endsWith('.js')) return join(dirname(here), 'worker.js');
  const root = resolve(dirname(here), '..', '..');
  return join(root, 'dist', 'src', 'runner', 'worker.js');
}

/** A pair's images copied once into shared memory, for every configuration's task. */
export interface SharedPair {
  left: SharedArrayBuffer;
  right: SharedArrayBuffer;
  leftColor: SharedRaster;
  rightColor: SharedRaster;
}

function sharedFloats(a: Float32Array, reuse?: SharedArrayBuffer): SharedArrayBuffer {
  const sab = reuse && reuse.byteLength === a.length * 4 ? reuse : new SharedArrayBuffer(a.length * 4);
  new Float32Array(sab).set(a);
  return sab;
}

function sharedRaster(img: RasterImage, reuse?: SharedRaster): SharedRaster {
  const bytes = img.data.length * (img.bitDepth === 16 ? 2 : 1);
  const sab = reuse && reuse.buffer.byteLength === bytes ? reuse.buffer : new SharedArrayBuffer(bytes);
  if (img.bitDepth === 16) new Uint16Array(sab).set(img.data);
  else new Uint8Array(sab).set(img.data);
  return { width: img.width, height: img.height, channels: img.channels, bitDepth: img.bitDepth, buffer: sab };
}

/**
 * A pair in shared memory. `reuse` is a slot of an earlier pair whose tasks have all
 * settled: its buffers are refilled when their sizes match (no new shared memory per
 * pair, whose release would wait for every worker's garbage collection).
 */
export function sharePair(pair: LoadedPair, reuse?: SharedPair): SharedPair {
  return {
    left: sharedFloats(pair.leftGray, reuse?.left),
    right: sharedFloats(pair.rightGray, reuse?.right),
    leftColor: sharedRaster(pair.left, reuse?.leftColor),
    rightColor: sharedRaster(pair.right, reuse?.rightColor),
  };
}

function abortError(): Error {
  const e = new Error('the task was aborted before it started');
  e.name = 'AbortError';
  return e;
}

export class MatchPool {
  private readonly pool: Piscina;
  constructor(readonly size: number) {
    const file = workerFile();
    if (!existsSync(file)) throw new InputError(file, 'the compiled worker is missing; run `npm run build` first');
    this.pool = new Piscina({
      filename: pathToFileURL(file).href,
      minThreads: size,
      maxThreads: size,
      concurrentTasksPerWorker: 1,
      idleTimeout: 60_000,
    });
  }

  /** Tasks handed to piscina and not settled; at most `size`, so a handed task starts at once. */
  private active = 0;
  private readonly waiting: (() => void)[] = [];

  /**
   * Run one task; rejects (an AbortError) when the signal aborts it. Tasks wait here
   * for a free thread rather than in piscina's queue, so `onStart` is called when the
   * task really starts (a time limit counts from then, not from queueing).
   */
  async run(task: MatchTask, signal: AbortSignal, onStart?: () => void): Promise<DecodedReply> {
    await this.freeThread(signal);
    try {
      onStart?.();
      return decodeReply((await this.pool.run(task, { signal })) as MatchReply);
    } finally {
      this.active--;
      this.waiting.shift()?.();
    }
  }

  private freeThread(signal: AbortSignal): Promise<void> {
    if (signal.aborted) return Promise.reject(abortError());
    if (this.active < this.size) {
      this.active++;
      return Promise.resolve();
    }
    return new Promise((resolve, reject) => {
      const go = (): void => {
        signal.removeEventListener('abort', onAbort);
        this.active++;
        resolve();
      };
      const onAbort = (): void => {
        const i = this.waiting.indexOf(go);
        if (i >= 0) this.waiting.splice(i, 1);
        reject(abortError());
      };
      this.waiting.push(go);
      signal.addEventListener('abort', onAbort, { once: true });
    });
  }

  async close(): Promise<void> {
    await this.pool.close({ force: true });
  }
}
