/**
 * The pool worker's collection between tasks (src/runner/worker.ts collectGarbage):
 * memory a finished task dropped outside the V8 heap (here wasm memories, as block makes
 * per call) is returned right away instead of waiting for V8's own schedule.
 * Runs the compiled worker module (dist/, `npm run build`) inside a real worker thread,
 * as the pool does.
 */
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { describe, expect, it } from 'vitest';

const WORKER_JS = pathToFileURL(join(resolve(import.meta.dirname, '..', '..'), 'dist', 'src', 'runner', 'worker.js')).href;
const MiB = 1024 * 1024;

// In the thread: drop five 10 MiB wasm memories, read external memory, collect, read again.
const SCRIPT = `
const { parentPort } = require('node:worker_threads');
const { getHeapStatistics } = require('node:v8');
import(${JSON.stringify(WORKER_JS)}).then((m) => {
  const ext = () => getHeapStatistics().external_memory;
  const base = ext();
  for (let i = 0; i < 5; i++) new Uint8Array(new WebAssembly.Memory({ initial: 160 }).buffer).fill(i + 1);
  const before = ext();
  m.collectGarbage();
  parentPort.postMessage({ base, before, after: ext() });
});
`;

function measure(env: NodeJS.ProcessEnv): Promise<{ base: number; before: number; after: number }> {
  return new Promise((res, rej) => {
    const w = new Worker(SCRIPT, { eval: true, env });
    w.once('message', (m: { base: number; before: number; after: number }) => {
      void w.terminate();
      res(m);
    });
    w.once('error', rej);
  });
}

describe('collection between pool tasks', () => {
  it('returns dropped wasm memories at once, and PARALLAX_WORKER_GC=off leaves them to V8', async () => {
    const on = await measure({ ...process.env, PARALLAX_WORKER_GC: 'on' });
    // Precondition, hand count: 5 x 160 pages x 64 KiB = 50 MiB counted as external memory
    // (V8 accounts wasm memory backing stores as external; from memory, checked here).
    expect(on.before - on.base).toBeGreaterThanOrEqual(45 * MiB);
    // Our policy (worker.ts): after a task, external memory ends at or below 24 MiB when
    // what is above it is garbage (a scavenge may leave up to that much for later).
    expect(on.after).toBeLessThanOrEqual(24 * MiB);
    expect(on.after).toBeLessThan(on.before - 25 * MiB);

    const off = await measure({ ...process.env, PARALLAX_WORKER_GC: 'off' });
    // Control: without the collection the same garbage is still counted (so the check above
    // measures collectGarbage, not V8 collecting by itself).
    expect(off.before - off.base).toBeGreaterThanOrEqual(45 * MiB);
    expect(off.before - off.after).toBeLessThan(5 * MiB);
    expect(off.after).toBeGreaterThan(24 * MiB);
  });
});
