/**
 * Loads the AssemblyScript SIMD kernels compiled by scripts/build-wasm.sh into
 * build/wasm/<name>.wasm. The file is found by walking up from this module to the
 * folder that holds package.json, so it works from the sources (vitest) and from dist/.
 * Compiled modules are cached per process (and per worker thread).
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

/*
 * The project's tsconfig has no DOM lib, and @types/node does not declare the
 * WebAssembly global, so the few members used here are typed locally.
 */
export interface WasmModule {
  readonly __wasmModule: true;
}
export interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
export type WasmExports = Record<string, unknown>;
interface WasmApi {
  compile(bytes: Uint8Array): Promise<WasmModule>;
  instantiate(mod: WasmModule, imports: object): Promise<{ exports: WasmExports }>;
  Memory: new (d: { initial: number; maximum?: number }) => WasmMemory;
}
const WA = (globalThis as unknown as { WebAssembly: WasmApi }).WebAssembly;

let rootCache: string | null | undefined;

/** The folder holding package.json above this module, or null. */
export function packageRoot(): string | null {
  if (rootCache !== undefined) return rootCache;
  let dir = dirname(fileURLToPath(import.meta.url));
  for (;;) {
    if (existsSync(join(dir, 'package.json'))) {
      rootCache = dir;
      return dir;
    }
    const up = dirname(dir);
    if (up === dir) {
      rootCache = null;
      return null;
    }
    dir = up;
  }
}

/** Path of a compiled kernel, whether or not it exists. */
export function wasmPath(name: string): string | null {
  const root = packageRoot();
  return root ? join(root, 'build', 'wasm', `${name}.wasm`) : null;
}

const modules = new Map<string, Promise<WasmModule | null>>();

/** The compiled module, or null when the file is missing (not built). */
export function loadWasmModule(name: string): Promise<WasmModule | null> {
  let p = modules.get(name);
  if (!p) {
    p = (async () => {
      const path = wasmPath(name);
      if (!path || !existsSync(path)) return null;
      const bytes = readFileSync(path);
      return WA.compile(bytes);
    })();
    modules.set(name, p);
  }
  return p;
}

/** Largest memory (bytes) we ask a wasm32 instance for. */
export const WASM_MAX_BYTES = 4 * 1024 * 1024 * 1024 - 65536;

/**
 * A fresh instance of a kernel module over a new memory of at least `bytes`
 * (so memory is returned to the engine when the caller drops it).
 */
export async function instantiateKernel(
  mod: WasmModule,
  bytes: number,
): Promise<{ exports: WasmExports; memory: WasmMemory }> {
  const pages = Math.ceil(bytes / 65536);
  const memory = new WA.Memory({ initial: pages, maximum: pages });
  const instance = await WA.instantiate(mod, { env: { memory } });
  return { exports: instance.exports, memory };
}

/** wasm32 page count limit (4 GiB). */
const MAX_PAGES = 65536;

interface Pooled {
  readonly exports: WasmExports;
  readonly memory: WasmMemory;
  busy: boolean;
}

const pool = new Map<string, Pooled>();

export interface LeasedKernel {
  readonly exports: WasmExports;
  readonly memory: WasmMemory;
  /** Hands the instance back for the next match (call once, when done with its memory). */
  release(): void;
}

/**
 * An instance with at least `bytes` of memory. One instance per kernel name is kept
 * and reused by the next match in this thread (its memory grown when too small), so
 * a run of many pairs does not fault in a fresh memory each time; while it is leased,
 * callers get a fresh instance. The pooled memory stays allocated (at the largest size
 * used) until dropKernelPool().
 */
export async function leaseKernel(name: string, mod: WasmModule, bytes: number): Promise<LeasedKernel> {
  const pages = Math.ceil(bytes / 65536);
  let p = pool.get(name);
  if (!p) {
    const memory = new WA.Memory({ initial: pages, maximum: MAX_PAGES });
    const instance = await WA.instantiate(mod, { env: { memory } });
    p = pool.get(name); // another match may have pooled one meanwhile
    if (!p) {
      p = { exports: instance.exports, memory, busy: false };
      pool.set(name, p);
    } else {
      return { exports: instance.exports, memory, release: () => {} };
    }
  }
  if (p.busy) {
    const inst = await instantiateKernel(mod, bytes);
    return { ...inst, release: () => {} };
  }
  // synchronous from here: no other match can take or grow it in between
  const have = p.memory.buffer.byteLength / 65536;
  if (have < pages) p.memory.grow(pages - have);
  p.busy = true;
  const leased = p;
  let done = false;
  return {
    exports: leased.exports,
    memory: leased.memory,
    release: () => {
      if (done) return;
      done = true;
      leased.busy = false;
    },
  };
}

/** Forgets the pooled instances (their memory is freed once no arena refers to it). */
export function dropKernelPool(): void {
  pool.clear();
}
