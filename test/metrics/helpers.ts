/** Test helpers: a seeded PRNG and a runner for numpy scripts on raw files in a temp dir. */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** mulberry32, the shared seeded test generator (test/support/rng.ts). */
import { mulberry32 as rng } from '../support/rng.js';
export { rng };

/** The default python3 (pyenv, numpy 2.x, scipy). */
export const PYTHON = 'python3';

/**
 * Writes each typed array as a raw little-endian file `<name>.bin` into a fresh temp dir,
 * runs `script` with that dir as sys.argv[1] and returns its stdout parsed as JSON.
 * The script reads files with np.fromfile(os.path.join(d, name + '.bin'), dtype).
 */
export function runNumpy(files: Record<string, ArrayBufferView>, script: string): any {
  const dir = mkdtempSync(join(tmpdir(), 'parallax-metrics-'));
  try {
    for (const [name, arr] of Object.entries(files)) {
      writeFileSync(join(dir, `${name}.bin`), new Uint8Array(arr.buffer, arr.byteOffset, arr.byteLength));
    }
    const prelude = 'import sys, os, json\nimport numpy as np\nD = sys.argv[1]\n' +
      'def load(name, dt):\n    return np.fromfile(os.path.join(D, name + ".bin"), dtype=dt)\n';
    const out = execFileSync(PYTHON, ['-c', prelude + script, dir], { encoding: 'utf8', maxBuffer: 64 << 20 });
    return JSON.parse(out);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** |a - b| <= rel * max(|a|, |b|), with exact equality for zeros. */
export function closeRel(a: number, b: number, rel: number): boolean {
  if (a === b) return true;
  return Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b));
}
