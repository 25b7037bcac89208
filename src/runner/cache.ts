/**
 * Result cache: matcher outputs stored by content address, so a rerun with the same
 * inputs, code and parameters skips the matching (scores are recomputed from the
 * cached disparity, which is cheap, so new thresholds or region settings reuse it).
 *
 * Key: sha256 over a canonical JSON of
 *   { format: CACHE_FORMAT, left: sha256(left file), right: sha256(right file),
 *     matcherId, codeHash, params (keys sorted), range: [min, max],
 *     and under a camera fault: condition, and for noise its conditionSeed }
 * Entry file `<dir>/<key[0:2]>/<key>.pxd`:
 *   bytes 0-3 "PXD1", 4-7 header length L (uint32 LE), then L bytes of JSON header
 *   { width, height, time_ms, peak_mb, matcherId, created, confidence }, zero padding to
 *   a multiple of 4, then width*height float32 little-endian values (NaN = no answer),
 *   and when `confidence` is true a second plane of width*height float32: the matcher's
 *   confidence map.
 * Writes are atomic (temporary file + rename); an unreadable or malformed entry is a
 * miss (and is removed). A hit touches the file's modification time, and pruning
 * removes the least recently used entries (oldest modification time) first.
 */
import { createHash } from 'node:crypto';
import { createReadStream, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, utimesSync } from 'node:fs';
import { endianness } from 'node:os';
import { join, resolve } from 'node:path';
import { InputError } from '../core/errors.js';
import type { ParamValue } from '../core/params.js';
import { writeFileAtomic } from '../io/files.js';
import { byCodeUnits } from '../core/order.js';

/** Version of the key recipe and the entry layout; bump when either changes. */
export const CACHE_FORMAT = 'parallax-disparity-cache/2';
export const CACHE_DIR_NAME = '.parallax-cache';
export const DEFAULT_CACHE_MAX_MB = 2048;
const MAGIC = 'PXD1';
const LITTLE_ENDIAN = endianness() === 'LE';
const EXT = '.pxd';

export interface CacheKeyParts {
  leftHash: string;
  rightHash: string;
  matcherId: string;
  codeHash: string;
  params: Readonly<Record<string, ParamValue>>;
  minDisparity: number;
  maxDisparity: number;
  /** A camera-fault condition and its noise seed (src/conditions); absent for clean, whose keys stay as they were. */
  condition?: string;
  conditionSeed?: number;
}

export interface CacheEntry {
  width: number;
  height: number;
  data: Float32Array;
  /** The matcher's confidence map, when it gave one. */
  confidence?: Float32Array | null;
  timeMs: number | null;
  peakMb: number | null;
  matcherId: string;
}

/** The cache folder: the option, else $PARALLAX_CACHE, else .parallax-cache/ in the working folder. */
export function defaultCacheDir(cwd: string = process.cwd(), env: NodeJS.ProcessEnv = process.env): string {
  const fromEnv = env.PARALLAX_CACHE;
  return fromEnv && fromEnv.trim() ? resolve(cwd, fromEnv) : resolve(cwd, CACHE_DIR_NAME);
}

/** sha256 hex of a file, streamed. */
export function fileSha256(path: string): Promise<string> {
  return new Promise((res, rej) => {
    const h = createHash('sha256');
    const s = createReadStream(path);
    s.on('data', (c) => h.update(c));
    s.on('error', rej);
    s.on('end', () => res(h.digest('hex')));
  });
}

/** The cache key of a job (hex sha256). */
export function cacheKey(p: CacheKeyParts): string {
  const params: Record<string, ParamValue> = {};
  for (const k of Object.keys(p.params).sort()) params[k] = p.params[k];
  const canonical = JSON.stringify({
    format: CACHE_FORMAT,
    left: p.leftHash,
    right: p.rightHash,
    matcherId: p.matcherId,
    codeHash: p.codeHash,
    params,
    range: [p.minDisparity, p.maxDisparity],
    ...(p.condition !== undefined ? { condition: p.condition, conditionSeed: p.conditionSeed ?? null } : {}),
  });
  return createHash('sha256').update(canonical).digest('hex');
}

/** Entry bytes (see the module comment). */
export function encodeEntry(e: CacheEntry): Buffer {
  const header = Buffer.from(
    JSON.stringify({ width: e.width, height: e.height, time_ms: e.timeMs, peak_mb: e.peakMb, matcherId: e.matcherId, created: new Date().toISOString(), confidence: (e.confidence ?? null) !== null }),
    'utf8',
  );
  const pad = (4 - ((8 + header.length) % 4)) % 4;
  const dataOffset = 8 + header.length + pad;
  const planes = e.confidence ? [e.data, e.confidence] : [e.data];
  const out = Buffer.alloc(dataOffset + e.data.length * 4 * planes.length);
  out.write(MAGIC, 0, 'latin1');
  out.writeUInt32LE(header.length, 4);
  header.copy(out, 8);
  planes.forEach((plane, k) => {
    const at = dataOffset + k * e.data.length * 4;
    if (LITTLE_ENDIAN) out.set(new Uint8Array(plane.buffer, plane.byteOffset, plane.length * 4), at);
    else for (let i = 0; i < plane.length; i++) out.writeFloatLE(plane[i], at + i * 4);
  });
  return out;
}

/** Parse entry bytes; undefined when they are not a well-formed entry. */
export function decodeEntry(buf: Uint8Array): CacheEntry | undefined {
  const b = Buffer.from(buf.buffer, buf.byteOffset, buf.byteLength);
  if (b.length < 8 || b.toString('latin1', 0, 4) !== MAGIC) return undefined;
  const hl = b.readUInt32LE(4);
  if (8 + hl > b.length) return undefined;
  let h: { width?: unknown; height?: unknown; time_ms?: unknown; peak_mb?: unknown; matcherId?: unknown; confidence?: unknown };
  try {
    h = JSON.parse(b.toString('utf8', 8, 8 + hl)) as typeof h;
  } catch {
    return undefined;
  }
  const { width, height } = h;
  if (typeof width !== 'number' || typeof height !== 'number' || !Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) return undefined;
  const dataOffset = 8 + hl + ((4 - ((8 + hl) % 4)) % 4);
  const n = width * height;
  const planes = h.confidence === true ? 2 : 1;
  if (b.length !== dataOffset + n * 4 * planes) return undefined;
  const plane = (k: number): Float32Array => {
    const at = dataOffset + k * n * 4;
    const out = new Float32Array(n);
    if (LITTLE_ENDIAN) new Uint8Array(out.buffer).set(b.subarray(at, at + n * 4));
    else for (let i = 0; i < n; i++) out[i] = b.readFloatLE(at + i * 4);
    return out;
  };
  const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);
  return { width, height, data: plane(0), confidence: planes === 2 ? plane(1) : null, timeMs: num(h.time_ms), peakMb: num(h.peak_mb), matcherId: typeof h.matcherId === 'string' ? h.matcherId : '' };
}

function entryPath(dir: string, key: string): string {
  return join(dir, key.slice(0, 2), key + EXT);
}

/** A cache folder. Every method is safe to call when the folder does not exist. */
export class ResultCache {
  hits = 0;
  misses = 0;
  constructor(readonly dir: string) {}

  /** The entry of a key, or undefined (a malformed entry is removed and counts as a miss). */
  get(key: string, width: number, height: number): CacheEntry | undefined {
    const file = entryPath(this.dir, key);
    let bytes: Buffer;
    try {
      bytes = readFileSync(file);
    } catch {
      this.misses++;
      return undefined;
    }
    const e = decodeEntry(bytes);
    if (!e || e.width !== width || e.height !== height) {
      rmSync(file, { force: true });
      this.misses++;
      return undefined;
    }
    try {
      const now = new Date();
      utimesSync(file, now, now); // LRU: most recently used
    } catch {
      /* read-only cache: still a hit */
    }
    this.hits++;
    return e;
  }

  async put(key: string, e: CacheEntry): Promise<void> {
    const file = entryPath(this.dir, key);
    mkdirSync(join(this.dir, key.slice(0, 2)), { recursive: true });
    await writeFileAtomic(file, encodeEntry(e));
  }
}

export interface CacheFileInfo {
  path: string;
  bytes: number;
  mtimeMs: number;
}

/** Every entry file of a cache folder. */
export function listEntries(dir: string): CacheFileInfo[] {
  if (!existsSync(dir)) return [];
  let subs;
  try {
    subs = readdirSync(dir, { withFileTypes: true });
  } catch (e) {
    throw new InputError(dir, `cannot read the cache folder (${(e as NodeJS.ErrnoException).code ?? 'error'})`);
  }
  const out: CacheFileInfo[] = [];
  for (const sub of subs) {
    if (!sub.isDirectory() || !/^[0-9a-f]{2}$/.test(sub.name)) continue;
    const d = join(dir, sub.name);
    let names: string[];
    try {
      names = readdirSync(d);
    } catch {
      continue;
    }
    for (const f of names) {
      if (!f.endsWith(EXT)) continue;
      try {
        const st = statSync(join(d, f));
        if (st.isFile()) out.push({ path: join(d, f), bytes: st.size, mtimeMs: st.mtimeMs });
      } catch {
        /* removed meanwhile */
      }
    }
  }
  return out;
}

export interface CacheSummary {
  entries: number;
  bytes: number;
  oldest: string | null;
  newest: string | null;
}

export function cacheSummary(dir: string): CacheSummary {
  const list = listEntries(dir);
  let bytes = 0;
  let lo = Infinity;
  let hi = -Infinity;
  for (const e of list) {
    bytes += e.bytes;
    if (e.mtimeMs < lo) lo = e.mtimeMs;
    if (e.mtimeMs > hi) hi = e.mtimeMs;
  }
  return {
    entries: list.length,
    bytes,
    oldest: list.length ? new Date(lo).toISOString() : null,
    newest: list.length ? new Date(hi).toISOString() : null,
  };
}

/** Remove least recently used entries until the folder holds at most maxBytes. */
export function pruneCache(dir: string, maxBytes: number): { removed: number; freedBytes: number; entries: number; bytes: number } {
  const list = listEntries(dir).sort((a, b) => a.mtimeMs - b.mtimeMs || byCodeUnits(a.path, b.path));
  let total = 0;
  for (const e of list) total += e.bytes;
  let removed = 0;
  let freed = 0;
  for (const e of list) {
    if (total <= maxBytes) break;
    rmSync(e.path, { force: true });
    total -= e.bytes;
    freed += e.bytes;
    removed++;
  }
  return { removed, freedBytes: freed, entries: list.length - removed, bytes: total };
}
