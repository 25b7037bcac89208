/** Test helpers: a seeded PRNG and a runner for numpy scripts on raw files in a temp dir. */

/** mulberry32, the shared seeded test generator (test/support/rng.ts). */
import { mulberry32 as rng } from '../support/rng.js';
import { runPython as runPy } from '../support/python.js';
export { rng };

export { PYTHON } from '../support/python.js';

/**
 * Writes each typed array as a raw little-endian file `<name>.bin` into a fresh temp dir,
 * runs `script` with that dir as sys.argv[1] and returns its stdout parsed as JSON.
 * The script reads files with np.fromfile(os.path.join(d, name + '.bin'), dtype).
 */
export function runNumpy(files: Record<string, ArrayBufferView>, script: string): any {
  const prelude = 'import sys, os, json\nimport numpy as np\nD = sys.argv[1]\n' +
    'def load(name, dt):\n    return np.fromfile(os.path.join(D, name + ".bin"), dtype=dt)\n';
  const bins = Object.fromEntries(Object.entries(files).map(([name, arr]) => [`${name}.bin`, arr]));
  return JSON.parse(runPy({ code: prelude + script, files: bins }));
}

/** |a - b| <= rel * max(|a|, |b|), with exact equality for zeros. */
export function closeRel(a: number, b: number, rel: number): boolean {
  if (a === b) return true;
  return Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b));
}
