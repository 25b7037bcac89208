/**
 * Bench section "runner": what the worker pool, the result cache and the bounded pair
 * queue buy, measured on the built CLI (bin/parallax.js) in child processes.
 *   1. Speed-up of --jobs 2 over --jobs 1: the demo set (datasets/demo, rendered when
 *      missing) with the built-in matchers at their defaults, cache off.
 *   2. A fully cached rerun of that run, as a share of the first run's time.
 *   3. Peak memory of a 500-pair run against a 20-pair run (640x480, block:window=5,
 *      --jobs 2): the largest resident set of the child process tree, from
 *      getrusage(RUSAGE_CHILDREN).ru_maxrss in a Python wrapper (GNU time is not
 *      installed). 20 distinct pairs are rendered by src/synth; the 500-pair manifest
 *      lists each of them 25 times under distinct ids (rendering 500 would take ~15 min
 *      on this machine), which loads, matches and scores 500 pairs all the same.
 * Wall times include process start. The machine is shared: the load average is printed.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { writeDemoDataset, writeSyntheticDataset } from '../src/synth/dataset.js';

const ROOT = resolve(import.meta.dirname, '..', '..');
const BIN = join(ROOT, 'bin', 'parallax.js');
const BUILTINS = ['block', 'census', 'sgm', 'bp'];

const WRAP =
  'import resource,subprocess,sys,time\nt=time.time()\nr=subprocess.run(sys.argv[1:])\nu=resource.getrusage(resource.RUSAGE_CHILDREN)\nprint(r.returncode, u.ru_maxrss, time.time()-t, u.ru_utime+u.ru_stime)';

/** Wall time and CPU time (user + system, all threads) of one CLI run. */
function cli(args: string[], cwd: string): { secs: number; cpu: number } {
  const r = spawnSync('/usr/bin/python3', ['-c', WRAP, process.execPath, BIN, ...args], { cwd, encoding: 'utf8', env: { ...process.env, FORCE_COLOR: '0' } });
  const [code, , secs, cpu] = r.stdout.trim().split(/\s+/).map(Number);
  if (r.status !== 0 || code !== 0) throw new Error(`parallax ${args.join(' ')} failed: ${r.stderr}`);
  return { secs: secs!, cpu: cpu! };
}

/**
 * Largest RSS (MiB) of the child tree of one CLI run (ru_maxrss), its wall time, and the
 * largest RSS sampled (every 100 ms from /proc) while jobs were still running, i.e.
 * before the tables and the report are written.
 */
async function peakRun(args: string[], cwd: string, journal: string, total: number): Promise<{ mb: number; secs: number; matchingMb: number }> {
  const child = spawn('/usr/bin/python3', ['-c', WRAP, process.execPath, BIN, ...args], { cwd, env: { ...process.env, FORCE_COLOR: '0' }, stdio: ['ignore', 'pipe', 'pipe'] });
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
  const [rc, kb, secs] = out.trim().split(/\s+/).map(Number);
  if (code !== 0 || rc !== 0) throw new Error(`peak run failed: ${err}`);
  return { mb: kb! / 1024, secs: secs!, matchingMb: matchingKb / 1024 };
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

    const t1 = cli(['run', '-d', demo, ...m, '--jobs', '1', '--no-cache', '-o', join(tmp, 'j1'), '-q'], tmp);
    const t2 = cli(['run', '-d', demo, ...m, '--jobs', '2', '--no-cache', '-o', join(tmp, 'j2'), '-q'], tmp);
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
    // Memory: 20 rendered pairs; manifests of 20 and of 500 entries over the same files.
    const bulk = join(tmp, 'bulk');
    await writeSyntheticDataset(bulk, { count: 20, seed: 41, width: 640, height: 480, name: 'dock-bulk', samples: 1 });
    const base = JSON.parse(readFileSync(join(bulk, 'dataset.json'), 'utf8')) as { pairs: { id: string }[]; name: string };
    writeFileSync(join(bulk, 'm20.json'), JSON.stringify({ ...base, name: 'dock-bulk-20' }));
    const many = [];
    for (let r = 0; r < 25; r++) for (const p of base.pairs) many.push({ ...p, id: `r${String(r).padStart(2, '0')}-${p.id}` });
    writeFileSync(join(bulk, 'm500.json'), JSON.stringify({ ...base, name: 'dock-bulk-500', pairs: many }));
    const args = ['-m', 'block:window=5', '--jobs', '2', '--no-cache', '-q'];
    const p20 = await peakRun(['run', '-d', join(bulk, 'm20.json'), ...args, '-o', join(tmp, 'p20')], tmp, join(tmp, 'p20', 'results.jsonl'), 20);
    const p500 = await peakRun(['run', '-d', join(bulk, 'm500.json'), ...args, '-o', join(tmp, 'p500')], tmp, join(tmp, 'p500', 'results.jsonl'), 500);
    process.stdout.write('| 640x480, block:window=5, --jobs 2 | peak RSS MiB (whole run) | largest sampled RSS MiB while matching | wall s |\n|---|---:|---:|---:|\n');
    for (const [name, p] of [['20 pairs', p20], ['500 pairs', p500]] as const) {
      process.stdout.write(`| ${name} | ${p.mb.toFixed(0)} | ${p.matchingMb.toFixed(0)} | ${p.secs.toFixed(1)} |\n`);
    }
    process.stdout.write(
      `\nPeak memory, 500 pairs / 20 pairs: **${(p500.mb / p20.mb).toFixed(2)}x** over the whole run (target <= 1.2x), ` +
        `${(p500.matchingMb / p20.matchingMb).toFixed(2)}x while matching. Load average at the end: ${load()}.\n`,
    );
  } finally {
    rmSync(tmp, { recursive: true, force: true });
  }
}
