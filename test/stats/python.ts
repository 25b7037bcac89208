/** Run a Python snippet with JSON on stdin and JSON on stdout (outside reference). */
import { spawnSync } from 'node:child_process';

export function runPython(code: string, input: unknown, python = 'python3'): any {
  const r = spawnSync(python, ['-c', code], { input: JSON.stringify(input), encoding: 'utf8', timeout: 60_000 });
  if (r.status !== 0) throw new Error(`python failed: ${r.stderr}`);
  return JSON.parse(r.stdout);
}
