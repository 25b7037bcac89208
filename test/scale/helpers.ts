/** Shared helpers of the scale tests: small datasets, the built CLI, table comparison. */
import { BIN, REPO, splitCsvLine } from '../support/cli.js';
export { BIN, REPO, parallax, type CliResult } from '../support/cli.js';
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { writeSyntheticDataset } from '../../src/synth/dataset.js';


export function requireBuild(): void {
  if (!existsSync(join(REPO, 'dist', 'src', 'runner', 'worker.js'))) throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
}

/** A small rendered dock dataset (96x72, one sample per pixel: fast). */
export async function smallDataset(dir: string, count: number, seed = 7): Promise<string> {
  await writeSyntheticDataset(dir, { count, seed, width: 96, height: 72, name: 'dock-small', samples: 1 });
  return dir;
}

export function parallaxAsync(args: string[], cwd: string): ChildProcess {
  return spawn(process.execPath, [BIN, ...args], { cwd, env: { ...process.env, FORCE_COLOR: '0' }, stdio: ['ignore', 'pipe', 'pipe'] });
}

export function exited(child: ChildProcess): Promise<{ code: number | null; signal: NodeJS.Signals | null; stderr: string }> {
  let stderr = '';
  child.stderr?.on('data', (c: Buffer) => (stderr += c.toString()));
  child.stdout?.resume();
  return new Promise((res) => child.on('exit', (code, signal) => res({ code, signal, stderr })));
}

/** Lines of a journal that end with a newline (whole lines). */
export function wholeLines(file: string): string[] {
  if (!existsSync(file)) return [];
  const t = readFileSync(file, 'utf8');
  const end = t.lastIndexOf('\n');
  return end < 0 ? [] : t.slice(0, end).split('\n').filter((l) => l !== '');
}

/** Poll until `pred` holds (every 15 ms), or fail after `ms`. */
export async function waitFor(pred: () => boolean, ms: number, what: string): Promise<void> {
  const t0 = Date.now();
  while (!pred()) {
    if (Date.now() - t0 > ms) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 15));
  }
}


/**
 * A CSV table with the timing columns removed (time_ms, peak_mb and every aggregate
 * of them: their names contain `time_ms` or `peak_mb`), as text lines.
 */
export function tableWithoutTimings(file: string): string[] {
  const lines = readFileSync(file, 'utf8').trimEnd().split('\n');
  const header = splitCsvLine(lines[0]);
  const keep = header.map((h, i) => (/time_ms|peak_mb/.test(h) ? -1 : i)).filter((i) => i >= 0);
  return lines.map((l) => {
    const cells = splitCsvLine(l);
    return keep.map((i) => cells[i] ?? '').join(',');
  });
}

/** A module plugin that waits `delay` ms per pair, then answers a cheap, input-dependent disparity. */
export function writeSlowModule(file: string): string {
  writeFileSync(
    file,
    `export default {
  id: 'slowpoke',
  summary: 'test module: waits, then answers a shift derived from the intensities',
  version: '1',
  params: [{ name: 'delay', type: 'int', default: 150, min: 0, max: 10000, description: 'wait per pair, ms' }],
  async match(input, params, signal) {
    await new Promise((res, rej) => {
      const t = setTimeout(res, params.delay);
      signal.addEventListener('abort', () => { clearTimeout(t); rej(new Error('aborted')); }, { once: true });
    });
    const n = input.width * input.height;
    const out = new Float32Array(n);
    for (let i = 0; i < n; i++) out[i] = input.minDisparity + ((input.left[i] + 2 * input.right[i]) % (input.maxDisparity - input.minDisparity + 1));
    return out;
  },
};
`,
  );
  return file;
}

/** Rows of pairs.csv per job: 5 regions, each whole and within each depth band of the run (run.json config.depthBands). */
export function rowsPerJob(runDir: string): number {
  const bands = (JSON.parse(readFileSync(join(runDir, 'run.json'), 'utf8')) as { config: { depthBands?: number[] } }).config.depthBands ?? [];
  return 5 * (bands.length ? bands.length + 2 : 1);
}
