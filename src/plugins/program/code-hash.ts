/**
 * The code hash of a program matcher: sha256 over its definition and the bytes of every
 * command argument that names an existing file of at most 16 MiB (the script; small
 * program binaries), so editing the script invalidates cached results.
 */
import { createHash } from 'node:crypto';
import { readFileSync, statSync } from 'node:fs';
import { isAbsolute, resolve } from 'node:path';
import { parseProgramMatcherDef, type ProgramMatcherDef, type ProgramMatcherDefInput } from '../program-def.js';

const fileHashCache = new Map<string, string>();

/** sha256 of a file's bytes, cached by path, size and modification time. */
function fileHash(p: string, size: number, mtimeMs: number): string {
  const key = `${p}\0${size}\0${mtimeMs}`;
  let h = fileHashCache.get(key);
  if (!h) {
    h = createHash('sha256').update(readFileSync(p)).digest('hex');
    fileHashCache.set(key, h);
  }
  return h;
}

/** Files above this size (e.g. an interpreter binary) count by name only in the code hash. */
const HASHED_FILE_MAX_BYTES = 16 * 1024 * 1024;

export function programCodeHash(defIn: ProgramMatcherDef | ProgramMatcherDefInput, baseDir: string): string {
  const def = parseProgramMatcherDef(defIn);
  const cwd = resolve(baseDir, def.cwd ?? '.');
  const h = createHash('sha256');
  h.update(
    JSON.stringify({
      id: def.id,
      version: def.version ?? null,
      command: def.command,
      mode: def.mode,
      output: def.output,
      sign: def.disparitySign,
      scale: def.disparityScale,
      input: def.input,
      pad: def.pad ?? null,
      resize: def.resize ?? null,
      env: def.env ?? null,
    }),
  );
  for (const arg of def.command) {
    if (arg.includes('{')) continue;
    const p = isAbsolute(arg) ? arg : resolve(cwd, arg);
    try {
      const st = statSync(p);
      if (st.isFile() && st.size <= HASHED_FILE_MAX_BYTES) h.update(`\0file:${arg}\0${fileHash(p, st.size, st.mtimeMs)}`);
    } catch {
      // not a file: only the text counts
    }
  }
  return h.digest('hex');
}
