/**
 * Bench section "runner": what the worker pool, the result cache and the bounded pair
 * queue buy, measured on the built CLI (bin/parallax.js) in child processes.
 *   1. Speed-up of --jobs 2 over --jobs 1: the demo set (datasets/demo, rendered when
 *      missing) with the built-in matchers at their defaults, cache off.
 *   2. A fully cached rerun of that run, as a share of the first run's time.
 *   3. Peak memory of a 500-pair run against a 20-pair run (block:window=5, --jobs 2):
 *      500 distinct pairs rendered by src/synth at 640x480 with 1 sample per pixel (see
 *      bulkSet; rendered once in 2 processes and kept in the temp dir); the 20-pair run
 *      takes the first 20 of them. Two peaks per run: the whole run's maximum resident set
 *      of the CLI process (worker threads included, they share it), i.e. getrusage(
 *      RUSAGE_CHILDREN).ru_maxrss in a Python wrapper (GNU time is not installed); and the
 *      largest VmRSS sampled every 100 ms from /proc while jobs are still running (before
 *      the tables and the report). Both runs again with PARALLAX_WORKER_GC=off (no
 *      collection between tasks in the workers, see src/runner/worker.ts) for its effect
 *      and its cost in CPU and wall time.
 * Wall times include process start. The machine is shared: the load average is printed.
 * Environment: PARALLAX_BENCH_RUNNER=speedup runs part 1 only; PARALLAX_BENCH_ROUNDS=n
 * (default 1) alternates n rounds of --jobs 1 and --jobs 2 and takes each one's median
 * wall time (and the CPU time of that run), which steadies the figure on a busy machine.
 */
import { spawn, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { writeDemoDataset } from '../src/synth/dataset.js';
import { BUILTIN_MATCHERS } from '../matchers/index.js';

const ROOT = resolve(import.meta.dirname, '..', '..');
const BIN = join(ROOT, 'bin', 'parallax.js');
/** The built-in matchers, as the registry lists them. */
const BUILTINS = BUILTIN_MATCHERS.map((m) => m.id);

const WRAP =
  'import resource,subprocess,sys,time\nt=time.time()\nr=subprocess.run(sys.argv[1:])\nu=resource.getrusage(resource.RUSAGE_CHILDREN)\nprint(r.returncode, u.ru_maxrss, time.time()-t, u.ru_utime+u.ru_stime)';

/** Wall time and CPU time (user + system, all threads) of one CLI run. */
function cli(args: string[], cwd: string): { secs: number; cpu: number } {
  const r = spawnSync('/usr/bin/python3', ['-c', WRAP, process.execPath, BIN, ...args], { cwd, encoding: 'utf8', env: { ...process.env, FORCE_COLOR: '0' } });
  const [code, , secs, cpu] = r.stdout.trim().split(/\s+/).map(Number);
  if (r.status !== 0 || code !== 0) throw new Error(`parallax ${args.join(' ')} failed: ${r.stderr}`);
  return { secs: secs!, cpu: cpu! };
}

interface Peak {
  mb: number;
  secs: number;
  cpu: number;
  matchingMb: number;
}

/**
 * Largest RSS (MiB) of the child tree of one CLI run (ru_maxrss), its wall time, and the
 * largest RSS sampled (every 100 ms from /proc) while jobs were still running, i.e.
 * before the tables and the report are written.
 */
async function peakRun(args: string[], cwd: string, journal: string, total: number, env: Record<string, string> = {}): Promise<Peak> {
  const child = spawn('/usr/bin/python3', ['-c', WRAP, process.execPath, BIN, ...args], { cwd, env: { ...process.env, FORCE_COLOR: '0', ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  child.stdout.on('data', (c: Buffer) => (out += c.toString()));
  child.stderr.on('data', (c: Buffer) => (err += c.toString()));
  let matchingKb = 0;
  const timer = setInterval(() => {
    try {
      const kids = readFileSync(`/proc/${child.pid}/task/${child.pid}/children`, 'utf8').trim().split(/\s+/).filter(Boolean);
      const lines = existsSync(journal) ? readFileSync(journal, 'utf8').split('\n').length - 1 : 0;
      if (lines >= total) return;
      for (const k of kids) {
        const kb = Number(/VmRSS:\s+(\d+)/.exec(readFileSync(`/proc/${k}/status`, 'utf8'))?.[1] ?? 0);
        if (kb > matchingKb) matchingKb = kb;
      }
    } catch {
      /* the process is starting or gone */
    }
  }, 100);
  const code = await new Promise<number | null>((res) => child.on('exit', (c) => res(c)));
  clearInterval(timer);
  const [rc, kb, secs, cpu] = out.trim().split(/\s+/).map(Number);
  if (code !== 0 || rc !== 0) throw new Error(`peak run failed: ${err}`);
  return { mb: kb! / 1024, secs: secs!, cpu: cpu!, matchingMb: matchingKb / 1024 };
}

/** The bulk set's parameters: distinct dock pairs from the renderer, 1 sample per pixel (no supersampling). */
const BULK = { pairs: 500, small: 20, width: 640, height: 480, samples: 1, seed: 41, parts: 2 } as const;

/** Run one node script (ESM) in a child process; rejects with its stderr on failure. */
function nodeScript(code: string): Promise<void> {
  return new Promise((res, rej) => {
    const child = spawn(process.execPath, ['--input-type=module', '-e', code], { stdio: ['ignore', 'ignore', 'pipe'] });
    let err = '';
    child.stderr.on('data', (c: Buffer) => (err += c.toString()));
    child.on('exit', (c) => (c === 0 ? res() : rej(new Error(`render child failed (${c}): ${err}`))));
  });
}

/**
 * 500 distinct pairs rendered by src/synth (writeSyntheticDataset, 640x480, samples=1), in
 * BULK.parts processes at once (one seed each), and two manifests over them: m500.json (all)
 * and m20.json (the first 20). Kept in the temp dir under a key of the parameters and the
 * compiled renderer's code, so a rerun of the bench renders nothing.
 */
export async function bulkSet(): Promise<{ dir: string; note: string }> {
  const synthDir = join(ROOT, 'dist', 'src', 'synth');
  const h = createHash('sha256').update(JSON.stringify(BULK));
  for (const f of readdirSync(synthDir).filter((n) => n.endsWith('.js')).sort()) h.update(f).update(readFileSync(join(synthDir, f)));
  const dir = join(tmpdir(), `parallax-bench-bulk-${h.digest('hex').slice(0, 16)}`);
  const what = `${BULK.pairs} distinct pairs from the renderer at ${BULK.width}x${BULK.height}, 1 sample per pixel`;
  if (existsSync(join(dir, 'm500.json'))) return { dir, note: `${what} (cached in ${dir}).` };
  // Sets of other parameters or renderer code are stale: remove them, then render afresh.
  for (const n of readdirSync(tmpdir()).filter((n) => n.startsWith('parallax-bench-bulk-'))) rmSync(join(tmpdir(), n), { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  const per = Math.ceil(BULK.pairs / BULK.parts);
  const url = pathToFileURL(join(synthDir, 'dataset.js')).href;
  const t0 = performance.now();
  await Promise.all(
    Array.from({ length: BULK.parts }, (_, k) => {
      const opts = { count: Math.min(per, BULK.pairs - k * per), seed: BULK.seed + k, width: BULK.width, height: BULK.height, name: `part${k}`, samples: BULK.samples };
      return nodeScript(`import { writeSyntheticDataset } from ${JSON.stringify(url)};\nawait writeSyntheticDataset(${JSON.stringify(join(dir, `p${k}`))}, ${JSON.stringify(opts)});`);
    }),
  );
  const secs = (performance.now() - t0) / 1000;
  type Part = { camera?: unknown; disparityRange: [number, number]; pairs: Record<string, unknown>[] };
  const parts = Array.from({ length: BULK.parts }, (_, k) => JSON.parse(readFileSync(join(dir, `p${k}`, 'dataset.json'), 'utf8')) as Part);
  const pairs = parts.flatMap((m, k) =>
    m.pairs.map((p) => ({ ...p, id: `p${k}-${String(p.id)}`, left: `p${k}/${String(p.left)}`, right: `p${k}/${String(p.right)}`, truth: `p${k}/${String(p.truth)}`, occlusion: `p${k}/${String(p.occlusion)}` })),
  );
  const range: [number, number] = [Math.min(...parts.map((m) => m.disparityRange[0])), Math.max(...parts.map((m) => m.disparityRange[1]))];
  const manifest = (name: string, list: typeof pairs): string => JSON.stringify({ name, camera: parts[0].camera, disparityRange: range, pairs: list });
  // The 20-pair run takes the first 20 pairs of the 500-pair run's (sorted) order.
  writeFileSync(join(dir, 'm20.json'), manifest('dock-bulk-20', pairs.slice(0, BULK.small)));
  writeFileSync(join(dir, 'm500.tmp'), manifest('dock-bulk-500', pairs));
  renameSync(join(dir, 'm500.tmp'), join(dir, 'm500.json'));
  return { dir, note: `${what}, rendered now in ${BULK.parts} processes in ${secs.toFixed(0)} s (kept in ${dir} for reruns).` };
}

const load = (): string => loadavg().map((v) => v.toFixed(1)).join(' / ');

export default async function runnerBench(): Promise<void> {
  const tmp = mkdtempSync(join(tmpdir(), 'parallax-bench-runner-'));
  try {
    let demo = join(ROOT, 'datasets', 'demo');
    if (!existsSync(join(demo, 'dataset.json'))) {
      demo = join(tmp, 'demo');
      await writeDemoDataset(demo);
    }
    const m = BUILTINS.flatMap((id) => ['-m', id]);
    process.stdout.write(`Machine: ${availableParallelism()} cores, shared with other work (load average 1/5/15 min at start: ${load()}).\n\n`);

    const rounds = Math.max(1, Math.floor(Number(process.env.PARALLAX_BENCH_ROUNDS ?? '1')) || 1);
    const runs1: { secs: number; cpu: number }[] = [];
    const runs2: { secs: number; cpu: number }[] = [];
    for (let k = 0; k < rounds; k++) {
      for (const [jobs, into] of [['1', runs1], ['2', runs2]] as const) {
        const out = join(tmp, `j${jobs}`);
        rmSync(out, { recursive: true, force: true });
        into.push(cli(['run', '-d', demo, ...m, '--jobs', jobs, '--no-cache', '-o', out, '-q'], tmp));
      }
    }
    const median = (rs: { secs: number; cpu: number }[]): { secs: number; cpu: number } => [...rs].sort((a, b) => a.secs - b.secs)[(rs.length - 1) >> 1];
    const t1 = median(runs1);
    const t2 = median(runs2);
    if (rounds > 1) {
      const list = (rs: { secs: number; cpu: number }[]): string => rs.map((r) => `${r.secs.toFixed(1)} s (CPU ${r.cpu.toFixed(1)} s)`).join(', ');
      process.stdout.write(`${rounds} alternating rounds, medians below. --jobs 1: ${list(runs1)}; --jobs 2: ${list(runs2)}.\n\n`);
    }
    if (process.env.PARALLAX_BENCH_RUNNER === 'speedup') {
      process.stdout.write('| demo run (8 pairs x 4 built-in matchers) | wall s | CPU s | cores used (CPU / wall) |\n|---|---:|---:|---:|\n');
      for (const [name, r] of [['--jobs 1, no cache', t1], ['--jobs 2, no cache', t2]] as const) process.stdout.write(`| ${name} | ${r.secs.toFixed(1)} | ${r.cpu.toFixed(1)} | ${(r.cpu / r.secs).toFixed(2)} |\n`);
      process.stdout.write(`\nSpeed-up of --jobs 2 over --jobs 1: **${(t1.secs / t2.secs).toFixed(2)}x** in wall time (target >= 1.7x on two cores). Load average now: ${load()}.\n`);
      return;
    }
    const cache = join(tmp, 'cache');
    const c1 = cli(['run', '-d', demo, ...m, '--jobs', '2', '--cache-dir', cache, '-o', join(tmp, 'c1'), '-q'], tmp);
    const c2 = cli(['run', '-d', demo, ...m, '--jobs', '2', '--cache-dir', cache, '-o', join(tmp, 'c2'), '-q'], tmp);
    const fromCache = (JSON.parse(readFileSync(join(tmp, 'c2', 'run.json'), 'utf8')) as { cache: { jobs_from_cache: number } }).cache.jobs_from_cache;
    const row = (name: string, r: { secs: number; cpu: number }): string => `| ${name} | ${r.secs.toFixed(1)} | ${r.cpu.toFixed(1)} | ${(r.cpu / r.secs).toFixed(2)} |\n`;
    process.stdout.write('| demo run (8 pairs x 4 built-in matchers) | wall s | CPU s | cores used (CPU / wall) |\n|---|---:|---:|---:|\n');
    process.stdout.write(row('--jobs 1, no cache', t1) + row('--jobs 2, no cache', t2));
    process.stdout.write(row('--jobs 2, first run filling the cache', c1) + row(`--jobs 2, rerun (${fromCache} jobs from the cache)`, c2) + '\n');
    process.stdout.write(`Speed-up of --jobs 2 over --jobs 1: **${(t1.secs / t2.secs).toFixed(2)}x** in wall time (target >= 1.7x on two cores; `);
    process.stdout.write(`a "cores used" figure well under 2 with --jobs 2 means other processes held the cores). `);
    process.stdout.write(`Cached rerun: **${((100 * c2.secs) / c1.secs).toFixed(0)}%** of the first run's time. Load average now: ${load()}.\n\n`);
    // Memory: 500 distinct rendered pairs (cached between bench runs); the 20-pair run uses the first 20.
    const bulk = await bulkSet();
    process.stdout.write(`Bulk set: ${bulk.note}\n\n`);
    const args = ['-m', 'block:window=5', '--jobs', '2', '--no-cache', '-q'];
    const runs: [string, Peak][] = [];
    for (const gc of ['on', 'off']) {
      const env = { PARALLAX_WORKER_GC: gc };
      for (const n of [BULK.small, BULK.pairs]) {
        const out = join(tmp, `p${n}-${gc}`);
        const p = await peakRun(['run', '-d', join(bulk.dir, `m${n}.json`), ...args, '-o', out], tmp, join(out, 'results.jsonl'), n, env);
        runs.push([`${n} pairs, collection between tasks ${gc}`, p]);
        rmSync(out, { recursive: true, force: true });
      }
    }
    process.stdout.write('| 640x480, block:window=5, --jobs 2 | peak RSS MiB (whole run) | largest sampled RSS MiB while matching | wall s | CPU s |\n|---|---:|---:|---:|---:|\n');
    for (const [name, p] of runs) process.stdout.write(`| ${name} | ${p.mb.toFixed(0)} | ${p.matchingMb.toFixed(0)} | ${p.secs.toFixed(1)} | ${p.cpu.toFixed(1)} |\n`);
    const [on20, on500, off20, off500] = runs.map((r) => r[1]) as [Peak, Peak, Peak, Peak];
    process.stdout.write(
      `\nPeak memory, 500 pairs / 20 pairs: **${(on500.mb / on20.mb).toFixed(2)}x** over the whole run (target <= 1.2x), ` +
        `**${(on500.matchingMb / on20.matchingMb).toFixed(2)}x** while matching; without the between-task collections ` +
        `${(off500.mb / off20.mb).toFixed(2)}x and ${(off500.matchingMb / off20.matchingMb).toFixed(2)}x. ` +
        `Cost of the collections on the 500-pair run: CPU ${((100 * (on500.cpu - off500.cpu)) / off500.cpu).toFixed(1)}%, wall ${((100 * (on500.secs - off500.secs)) / off500.secs).toFixed(1)}% ` +
        `(on a shared machine, differences of a few % are noise). Load average at the end: ${load()}.\n`,
    );
  } finally {
    rmSync(tmp, { recursive: true, force: true });
  }
}
