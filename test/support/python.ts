/**
 * Running Python as an outside reference (numpy, scipy, OpenCV): one runner for every
 * test. Files are written into a fresh temp folder (the working folder, also passed as
 * sys.argv[1]); stdin takes `input`; stdout is returned; a failure throws with stderr.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** Debian's Python, which has numpy and OpenCV (cv2). */
export const DEBIAN_PYTHON = '/usr/bin/python3';
/** The default python3 (numpy 2.x, scipy). */
export const PYTHON = 'python3';

export interface PythonRun {
  code: string;
  python?: string;
  /** Working folder; default a fresh temp folder holding `files`. */
  cwd?: string;
  files?: Record<string, ArrayBufferView>;
  input?: string;
}

export function runPython(r: PythonRun): string {
  const tmp = r.cwd === undefined ? mkdtempSync(join(tmpdir(), 'parallax-py-')) : undefined;
  const dir = r.cwd ?? tmp!;
  try {
    for (const [name, a] of Object.entries(r.files ?? {})) writeFileSync(join(dir, name), new Uint8Array(a.buffer, a.byteOffset, a.byteLength));
    const p = spawnSync(r.python ?? PYTHON, ['-c', r.code, dir], { cwd: dir, input: r.input, encoding: 'utf8', timeout: 60_000, maxBuffer: 64 << 20 });
    if (p.status !== 0) throw new Error(`python failed (${String(p.status)}): ${p.stderr}`);
    return p.stdout;
  } finally {
    if (tmp) rmSync(tmp, { recursive: true, force: true });
  }
}
